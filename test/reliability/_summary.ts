import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';

/**
 * Global setup of the reliability suite: gives every test file one results file, and at the end
 * prints the table the suite promises (lost, duplicated and 5xx must all be 0).
 */
export default function setup(): () => void {
  const file = path.join(fs.mkdtempSync(path.join(os.tmpdir(), 'vt-rel-results-')), 'results.jsonl');
  fs.writeFileSync(file, '');
  process.env.VT_RELIABILITY_RESULTS = file;
  return () => {
    const rows = fs
      .readFileSync(file, 'utf8')
      .split('\n')
      .filter(Boolean)
      .map((l) => JSON.parse(l) as Record<string, number | string>);
    const cols = ['requests', 'accepted', 'rejected', 'lost', 'duplicated', 'serverErrors', 'killsSurvived'] as const;
    const heads = ['check', 'requests', 'accepted', 'rejected', 'lost', 'duplicated', '5xx', 'kills survived'];
    const total: Record<string, number> = {};
    const body = rows.map((r) => [
      String(r.name),
      ...cols.map((c) => {
        if (typeof r[c] !== 'number') return '';
        total[c] = (total[c] ?? 0) + (r[c] as number);
        return String(r[c]);
      }),
    ]);
    body.push(['TOTAL', ...cols.map((c) => String(total[c] ?? 0))]);
    const widths = heads.map((h, i) => Math.max(h.length, ...body.map((r) => r[i]!.length)));
    const line = (cells: string[]) => cells.map((c, i) => (i === 0 ? c.padEnd(widths[i]!) : c.padStart(widths[i]!))).join('  ');
    process.stdout.write(`\nreliability figures\n${line(heads)}\n${widths.map((w) => '-'.repeat(w)).join('  ')}\n${body.map(line).join('\n')}\n`);
    const notes = rows.filter((r) => typeof r.note === 'string').map((r) => `  ${String(r.name)}: ${String(r.note)}`);
    if (notes.length) process.stdout.write(`${notes.join('\n')}\n`);
    fs.rmSync(path.dirname(file), { recursive: true, force: true });
  };
}
