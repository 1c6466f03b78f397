import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { commands } from '../../../src/cli/commands.ts';
import { makeExponentialDraw } from '../../../src/mechanism/index.ts';
import { offlineVerifiers } from '../../../src/web/routes/statements/offlineVerifier.ts';
import { REPO_ROOT } from '../../helpers/server.ts';

/**
 * The README is a promise too: every command in it must work as written. This suite extracts the
 * commands it can run from the README's `sh` blocks and runs them, compares the printed
 * `veiltally bounds` output and the ε table with what the code gives, and checks that the
 * configuration and command-line references list exactly what exists.
 */
const README = fs.readFileSync(path.join(REPO_ROOT, 'README.md'), 'utf8');

interface Block {
  lang: string;
  text: string;
  end: number;
}
const blocks: Block[] = [...README.matchAll(/^```(\w*)\n([\s\S]*?)^```$/gm)].map((m) => ({
  lang: m[1]!,
  text: m[2]!,
  end: m.index! + m[0].length,
}));

/** The lines the suite runs: `npx veiltally …` and the npm scripts that need neither a server nor PostgreSQL. */
const RUNNABLE = /^((?:[A-Z_]+=\S+\s+)*)(npx veiltally\b.*|npm run (?:demo|migrate)\b.*)$/;
function runnableLines(): string[] {
  return blocks
    .filter((b) => b.lang === 'sh')
    .flatMap((b) => b.text.split('\n'))
    .map((l) => l.replace(/\s+#.*$/, '').trim())
    .filter((l) => RUNNABLE.test(l) && !l.includes('DATABASE_URL'));
}

const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'vt-readme-'));
afterAll(() => fs.rmSync(dataDir, { recursive: true, force: true }));

/** Runs one README line through the shell, as written, with every data directory pointed at a temporary one. */
function run(line: string) {
  const env: NodeJS.ProcessEnv = { ...process.env, VEILTALLY_DATA_DIR: dataDir };
  delete env.DATABASE_URL;
  const command = line.replace(/\bVEILTALLY_DATA_DIR=\S+/g, `VEILTALLY_DATA_DIR=${dataDir}`);
  return spawnSync('sh', ['-c', command], { cwd: REPO_ROOT, env, encoding: 'utf8', timeout: 240_000 });
}

function section(heading: string): string {
  const start = README.indexOf(`\n## ${heading}\n`);
  if (start < 0) throw new Error(`README has no "## ${heading}" section`);
  const next = README.indexOf('\n## ', start + 4);
  return README.slice(start, next < 0 ? undefined : next);
}

/** First-column entries of the first table in a section, without backticks. */
function firstColumn(text: string): string[] {
  return text
    .split('\n')
    .filter((l) => l.startsWith('| `'))
    .map((l) => /^\| `([^`]+)`/.exec(l)![1]!);
}

describe('README', () => {
  it('starts with one paragraph stating the job, then the two commands', () => {
    const lines = README.split('\n');
    expect(lines[0]).toBe('# Veiltally');
    expect(lines[1]).toBe('');
    expect(lines[2]).toMatch(/^Veiltally runs private approval votes/);
    expect(lines[3]).toBe(''); // the job is one paragraph
    const first = blocks[0]!;
    expect(first.lang).toBe('sh');
    expect(first.text).toMatch(/^npm install && npm start\b/m);
    expect(first.text).toMatch(/^npm test\b/m);
  });

  it('every runnable command in it works as written', () => {
    const lines = runnableLines();
    // The extraction must find the commands, or this test would pass on nothing.
    expect(lines.length).toBeGreaterThanOrEqual(8);
    expect(lines).toContain('npm run demo');
    const outputs: string[] = [];
    for (const line of lines) {
      const r = run(line);
      expect({ line, status: r.status, stderr: r.stderr }).toEqual({ line, status: 0, stderr: expect.any(String) });
      outputs.push(r.stdout);
    }
    // The demo ran more than once on one data directory: the first run added, the others added nothing.
    const demoRuns = outputs.filter((o) => o.includes('Open election:'));
    expect(demoRuns.length).toBeGreaterThanOrEqual(2);
    expect(demoRuns[0]).toContain('Sample elections added');
    for (const o of demoRuns.slice(1)) expect(o).toContain('nothing was added');
  }, 600_000);

  it('shows the output of `veiltally bounds` exactly as the command prints it', () => {
    const i = blocks.findIndex((b) => b.lang === 'sh' && /^npx veiltally bounds [^\n]+\n$/.test(b.text));
    expect(i).toBeGreaterThan(0);
    const shown = blocks[i + 1]!;
    expect(shown.lang).toBe('text');
    const r = run(blocks[i]!.text.trim());
    expect(r.status).toBe(0);
    expect(shown.text).toBe(r.stdout);
  }, 120_000);

  it('gives the figures of its ε table as the mechanism computes them', () => {
    const rows = section('Choosing ε')
      .split('\n')
      .filter((l) => /^\| \d+, \d+\s+\|/.test(l))
      .map((l) =>
        l
          .split('|')
          .slice(1, -1)
          .map((c) => c.trim()),
      );
    expect(rows.length).toBeGreaterThanOrEqual(5);
    for (const [dk, epsilon, l90, l95, l99, within] of rows) {
      const [options, seats] = dk!.split(', ').map(Number);
      const b = makeExponentialDraw({ epsilon: epsilon!, options: options!, seats: seats!, neighbour: 'replace-one' }).bounds(0.05);
      expect([l90, l95, l99, within].map(Number)).toEqual([b.marginFor['0.9'], b.marginFor['0.95'], b.marginFor['0.99'], b.withinApprovals]);
    }
  });

  it('lists exactly the configuration variables the server reads', () => {
    const source = fs.readFileSync(path.join(REPO_ROOT, 'src', 'config.ts'), 'utf8');
    const read = [...source.matchAll(/^ {2}([A-Z][A-Z0-9_]+): /gm)].map((m) => m[1]!);
    expect(read.length).toBeGreaterThan(5);
    expect(firstColumn(section('Configuration reference')).sort()).toEqual([...new Set(read)].sort());
  });

  it('gives the SHA-256 of the two offline checkers exactly as /verify serves them', () => {
    // Any change to a checker changes its hash; this keeps the README's figures from going stale.
    const { html, node } = offlineVerifiers();
    expect(/`veiltally-verify\.mjs`: `([0-9a-f]{64})`/.exec(README)?.[1]).toBe(node.sha256);
    expect(/`veiltally-verify\.html`: `([0-9a-f]{64})`/.exec(README)?.[1]).toBe(html.sha256);
  });

  it('lists exactly the commands `veiltally` has', () => {
    expect(firstColumn(section('Command-line reference')).sort()).toEqual(commands.map((c) => c.name).sort());
  });
});
