/**
 * Runs every benchmark module named test/bench/*.bench.ts (or only those whose
 * file name contains an argument: `npm run bench -- mechanism`) and prints each
 * result as a table. A module exports `run()` returning, or resolving to, one of:
 * a BenchReport, a list of BenchReports, or a list of flat row objects (their keys
 * become the columns). Results also go to test/bench/results/latest.json (ignored
 * by git). Speed targets live here, never in timed unit tests.
 */
import { mkdirSync, readdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

export interface BenchReport {
  title: string;
  columns: string[];
  rows: (string | number)[][];
  notes?: string[];
}

const here = path.dirname(fileURLToPath(import.meta.url));

function table(report: BenchReport): string {
  const cells = [report.columns, ...report.rows.map((r) => r.map(String))];
  const widths = report.columns.map((_, c) => Math.max(...cells.map((r) => (r[c] ?? '').length)));
  const line = (r: string[]) => r.map((cell, c) => cell.padStart(widths[c] ?? 0)).join('  ');
  return [line(report.columns), widths.map((w) => '-'.repeat(w)).join('  '), ...cells.slice(1).map(line)].join('\n');
}

function isReport(value: unknown): value is BenchReport {
  const r = value as BenchReport;
  return typeof r?.title === 'string' && Array.isArray(r.columns) && Array.isArray(r.rows);
}

type Cell = string | number | boolean | null;
function isFlatRow(value: unknown): value is Record<string, Cell> {
  return (
    value !== null &&
    typeof value === 'object' &&
    !Array.isArray(value) &&
    Object.values(value).every((v) => v === null || ['string', 'number', 'boolean'].includes(typeof v))
  );
}

function toReports(file: string, result: unknown): BenchReport[] {
  const list = Array.isArray(result) ? result : [result];
  if (list.every(isReport)) return list;
  if (list.every(isFlatRow)) {
    const columns = [...new Set(list.flatMap((row) => Object.keys(row)))];
    return [{ title: file, columns, rows: list.map((row) => columns.map((c) => String(row[c] ?? ''))) }];
  }
  throw new Error('run() must return a report, a list of reports or a list of flat rows');
}

const filters = process.argv.slice(2);
const files = readdirSync(here)
  .filter((f) => f.endsWith('.bench.ts'))
  .filter((f) => filters.length === 0 || filters.some((x) => f.includes(x)))
  .sort();

if (files.length === 0) {
  console.error('no benchmark modules matched');
  process.exitCode = 1;
}

const all: Record<string, BenchReport[]> = {};
for (const file of files) {
  console.log(`\n=== ${file}`);
  try {
    const mod = (await import(pathToFileURL(path.join(here, file)).href)) as { run?: () => unknown };
    if (typeof mod.run !== 'function') throw new Error('module does not export run()');
    const reports = toReports(file, await mod.run());
    for (const report of reports) {
      console.log(`\n${report.title}\n${table(report)}`);
      for (const note of report.notes ?? []) console.log(`  ${note}`);
    }
    all[file] = reports;
  } catch (e) {
    console.error(`${file} failed: ${e instanceof Error ? e.message : String(e)}`);
    process.exitCode = 1;
  }
}

const out = path.join(here, 'results');
mkdirSync(out, { recursive: true });
writeFileSync(path.join(out, 'latest.json'), `${JSON.stringify({ at: new Date().toISOString(), node: process.version, reports: all }, null, 2)}\n`);
