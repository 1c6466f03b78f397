/**
 * `npm run bench [-- --quick] [-- name…]`: runs test/bench/*.bench.ts (or those whose file name
 * contains a given word), prints one table of figures, and writes bench-results.json at the
 * repository root (git-ignored):
 *   {"machine": "...", "figures": [{"name", "value", "unit", "ceiling", "ratio", "target", "met"}]}
 * Every ceiling is measured in the same run, since shared machines are noisy. A missed target is
 * reported, never a failure: the exit code is non-zero only when a benchmark could not run.
 * PostgreSQL: BENCH_DATABASE_URL (or TEST_DATABASE_URL), default postgres://postgres@127.0.0.1:5432/postgres.
 */
import { readdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { parseArgs } from 'node:util';
// @ts-expect-error plain JavaScript shared with npm start; no declarations
import { buildIsFresh } from '../../src/build/buildState.mjs';
// @ts-expect-error plain JavaScript shared with npm start; no declarations
import { build } from '../../src/build/build.mjs';
import { machine, type BenchOptions, type Figure } from './support/figures.ts';

const here = path.dirname(fileURLToPath(import.meta.url));
const root = path.resolve(here, '../..');

const { values, positionals } = parseArgs({ options: { quick: { type: 'boolean', default: false } }, allowPositionals: true });
const opts: BenchOptions = { quick: values.quick ?? false };

function cell(x: unknown): string {
  if (x === null || x === undefined) return '–';
  if (typeof x === 'boolean') return x ? 'yes' : 'NO';
  return String(x);
}

function table(figures: readonly Figure[]): string {
  const columns = ['name', 'value', 'unit', 'ceiling', 'ratio', 'target', 'met'] as const;
  const cells = [[...columns], ...figures.map((f) => columns.map((c) => cell(f[c])))];
  const widths = columns.map((_, c) => Math.max(...cells.map((r) => r[c]!.length)));
  const line = (r: string[]) => r.map((x, c) => (c === 0 ? x.padEnd(widths[c]!) : x.padStart(widths[c]!))).join('  ');
  return [line(cells[0]!), widths.map((w) => '-'.repeat(w)).join('  '), ...cells.slice(1).map(line)].join('\n');
}

const files = readdirSync(here)
  .filter((f) => f.endsWith('.bench.ts'))
  .filter((f) => positionals.length === 0 || positionals.some((x) => f.includes(x)))
  .sort();
if (files.length === 0) {
  console.error('no benchmark modules matched');
  process.exit(1);
}

const machineText = machine();
console.log(`Veiltally benchmarks${opts.quick ? ' (quick smoke run: small sizes, figures are rough)' : ''}\n${machineText}`);
if (!(buildIsFresh as () => boolean)()) {
  console.log('building dist/ first (the server and the command line are measured compiled)…');
  (build as () => number)();
}

const figures: Figure[] = [];
for (const file of files) {
  console.log(`\n=== ${file}`);
  const started = performance.now();
  try {
    const mod = (await import(pathToFileURL(path.join(here, file)).href)) as { run?: (o: BenchOptions) => Promise<Figure[]> | Figure[] };
    if (typeof mod.run !== 'function') throw new Error('module does not export run()');
    const got = await mod.run(opts);
    figures.push(...got);
    console.log(table(got));
    console.log(`  (${((performance.now() - started) / 1000).toFixed(1)} s)`);
  } catch (e) {
    console.error(`${file} failed: ${e instanceof Error ? (e.stack ?? e.message) : String(e)}`);
    process.exitCode = 1;
  }
}

console.log(`\n=== all figures\n${table(figures)}`);
const missed = figures.filter((f) => f.met === false).map((f) => f.name);
if (missed.length) console.log(`\nTargets missed (reported, not a failure): ${missed.join('; ')}`);
writeFileSync(path.join(root, 'bench-results.json'), `${JSON.stringify({ machine: machineText, figures }, null, 2)}\n`);
console.log('\nwrote bench-results.json');
