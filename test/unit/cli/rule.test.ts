import { describe, expect, it } from 'vitest';
import { ballotFile, runCli } from './support.ts';
import { pfFirstSeatFloat } from '../mechanism/support/pfReference.ts';

// A rowing club naming its boat (invented scenario); counts 31, 17 and 12 must never show.
const names = ['Heron', 'Kingfisher', 'Otter'];
const rows = [
  ...Array.from({ length: 12 }, () => '1,1,1'),
  ...Array.from({ length: 5 }, () => '1,1,'),
  ...Array.from({ length: 14 }, () => '1,,'),
];
const csv = `${names.join(',')}\n${rows.join('\n')}\n`; // Heron 31, Kingfisher 17, Otter 12

describe('--rule exponential|permute-and-flip on draw, simulate and bounds', () => {
  it('draw --rule permute-and-flip names the rule in the statement and its text; the default stays the exponential mechanism', async () => {
    const pf = await runCli(['draw', '--ballots', ballotFile(csv), '--epsilon', '1', '--rule', 'permute-and-flip', '--json']);
    expect(pf.code).toBe(0);
    expect(JSON.parse(pf.stdout).statement).toMatchObject({ mechanism: 'permute-and-flip', sampler: 'exact-bigint-permute-and-flip' });
    const text = await runCli(['draw', '--ballots', ballotFile(csv), '--epsilon', '1', '--rule', 'permute-and-flip']);
    expect(text.stdout.replace(/\s+/g, ' ')).toContain('Draw rule: permute-and-flip.');
    for (const count of ['31', '17', '12']) expect(text.stdout).not.toContain(count);
    const plain = await runCli(['draw', '--ballots', ballotFile(csv), '--epsilon', '1', '--json']);
    expect(JSON.parse(plain.stdout).statement.mechanism).toBe('exponential-mechanism');
  });

  it('an unknown rule is a usage error (exit 2, one line)', async () => {
    const r = await runCli(['bounds', '--options', '4', '--epsilon', '1', '--rule', 'coin']);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('--rule must be "exponential" or "permute-and-flip"');
  });

  it('simulate --json reports permute-and-flip’s exact first-seat probabilities (reference: the sum over orders)', async () => {
    // PrefLib 00033 posters counts (shared/datasets/README.md), ε = 0.5, replace-one: a = 1/4.
    const scores = [39, 33, 33, 33, 26, 24, 22, 19, 19, 18, 16, 16, 14, 14, 11, 11, 9];
    const r = await runCli(['simulate', '--scores', scores.join(','), '--epsilon', '0.5', '--rule', 'permute-and-flip', '--runs', '2000', '--json']);
    expect(r.code).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.rule).toBe('permute-and-flip');
    const reference = pfFirstSeatFloat(scores, 0.25);
    out.options.forEach((o: { exactProbability: number }, i: number) => expect(o.exactProbability).toBeCloseTo(reference[i]!, 12));
  });

  it('bounds --rule permute-and-flip: same accuracy margin, a smaller lead for 95%', async () => {
    const em = JSON.parse((await runCli(['bounds', '--options', '16', '--epsilon', '0.5', '--json'])).stdout);
    const pf = JSON.parse((await runCli(['bounds', '--options', '16', '--epsilon', '0.5', '--rule', 'permute-and-flip', '--json'])).stdout);
    expect(em.rule).toBe('exponential');
    expect(pf.rule).toBe('permute-and-flip');
    expect(pf.withinApprovals).toBe(em.withinApprovals);
    expect(pf.marginFor['0.95']).toBeLessThan(em.marginFor['0.95']);
    const text = await runCli(['bounds', '--options', '16', '--epsilon', '0.5', '--rule', 'permute-and-flip']);
    expect(text.stdout.replace(/\s+/g, ' ')).toContain('drawn with permute-and-flip');
  });
});
