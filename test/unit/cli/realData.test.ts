import { existsSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { readBallotFile } from '../../../src/cli/ballotFiles.ts';
import { datasetsDir, runCli } from './support.ts';

// Real approval ballots from PrefLib (Mattei & Walsh, ADT 2013). Expected counts are the
// check values in shared/datasets/README.md, computed there by an independent script.
const files = [
  {
    file: '00033-00000002.cat', // PrefLib 00033, posters
    voters: 65,
    counts: [39, 33, 33, 33, 26, 24, 22, 19, 19, 18, 16, 16, 14, 14, 11, 11, 9],
  },
  {
    file: '00026-00000001.cat', // PrefLib 00026; Laslier & Van der Straeten 2008
    voters: 365,
    counts: [62, 36, 26, 85, 139, 119, 33, 74, 67, 87, 21, 37, 67, 77, 64, 62],
  },
];

function numberLists(value: unknown): number[][] {
  if (Array.isArray(value)) {
    const own = value.every((v) => typeof v === 'number') && value.length > 0 ? [value as number[]] : [];
    return [...own, ...value.flatMap(numberLists)];
  }
  if (value !== null && typeof value === 'object') return Object.values(value).flatMap(numberLists);
  return [];
}

const present = existsSync(datasetsDir);
if (!present) console.warn(`Skipping real-data tests: ${datasetsDir} is absent (shared/ must sit beside the repository).`);

describe.skipIf(!present)('PrefLib approval files', () => {
  it.each(files)('$file parses to the README approval counts', async ({ file, voters, counts }) => {
    const tally = await readBallotFile(path.join(datasetsDir, file));
    expect(tally.scores).toEqual(counts);
    expect(tally.ballots).toBe(voters);
    expect(tally.labels).toHaveLength(counts.length);
    expect(new Set(tally.labels).size).toBe(counts.length);
  });

  it('top-two margins match the README (6 and 20)', async () => {
    for (const [i, margin] of [
      [0, 6],
      [1, 20],
    ] as const) {
      const sorted = [...files[i]!.counts].sort((a, b) => b - a);
      expect(sorted[0]! - sorted[1]!).toBe(margin);
      const tally = await readBallotFile(path.join(datasetsDir, files[i]!.file));
      const mine = [...tally.scores].sort((a, b) => b - a);
      expect(mine[0]! - mine[1]!).toBe(margin);
    }
  });

  it.each(files)('draw on $file returns valid labels and no counts', async ({ file, counts }) => {
    const full = path.join(datasetsDir, file);
    const tally = await readBallotFile(full);
    for (const seats of [1, 3]) {
      const { code, stdout, stderr } = await runCli(['draw', '--ballots', full, '--epsilon', '1', '--seats', String(seats), '--json']);
      expect(stderr).toBe('');
      expect(code).toBe(0);
      const out = JSON.parse(stdout) as { winners: string[]; statement: Record<string, unknown> };
      expect(out.winners).toHaveLength(seats);
      expect(new Set(out.winners).size).toBe(seats);
      for (const w of out.winners) expect(tally.labels).toContain(w);
      expect(out.statement.winners).toEqual(out.winners);
      expect(out.statement.turnout).toBeNull();
      // No count leaks: no key names them and no list of d numbers appears anywhere.
      expect(Object.keys(out.statement)).not.toEqual(expect.arrayContaining(['scores']));
      expect(numberLists(out).some((list) => list.length === counts.length)).toBe(false);
    }
  });
});
