import { spawnSync } from 'node:child_process';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { ballotFile, repoRoot } from './support.ts';

// The installed entry point, run as a child process, for real exit codes
// (0 done, 2 bad input: our CLI contract in src/cli/io.ts).
const good = ballotFile('Heron,Kingfisher,Otter\n1,,x\n,1,\n');

describe('the veiltally binary', () => {
  const bin = path.join(repoRoot, 'src', 'cli', 'bin.mjs');
  const run = (args: string[]) => spawnSync(process.execPath, [bin, ...args], { cwd: repoRoot, encoding: 'utf8', timeout: 30_000 });

  it('exits 0 and prints JSON for good input', () => {
    const result = run(['bounds', '--options', '3', '--epsilon', '1', '--json']);
    expect(result.status).toBe(0);
    expect(JSON.parse(result.stdout).marginFor).toEqual({ '0.9': 6, '0.95': 8, '0.99': 11 });
  });

  it('exits 2 with one stderr line for a bad ε', () => {
    const result = run(['draw', '--ballots', good, '--epsilon', '1e-3']);
    expect(result.status).toBe(2);
    expect(result.stdout).toBe('');
    expect(result.stderr.trimEnd().split('\n')).toEqual([
      expect.stringContaining('veiltally draw: epsilon must be a decimal number from 0.01 to 10'),
    ]);
  });
});
