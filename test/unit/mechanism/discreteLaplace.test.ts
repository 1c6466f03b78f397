import binomialTest from '@stdlib/stats-binomial-test';
import { describe, expect, it } from 'vitest';
import { discreteLaplace } from '../../../src/mechanism/index.ts';
import { chiSquarePValue } from './support/chiSquare.ts';
import { laplacePmf, laplaceTwoSidedTail, laplaceUpperTail } from './support/discreteLaplaceReference.ts';
import { D, type Dec } from './support/exactReference.ts';
import { countingRandom, seededRandom } from './support/seededRandom.ts';

const DRAWS = 200_000;

function draws(t: bigint, s: bigint, seed: number, n: number): number[] {
  const random = seededRandom(seed);
  const out = new Array<number>(n);
  for (let i = 0; i < n; i += 1) out[i] = Number(discreteLaplace(t, s, random));
  return out;
}

/** Bins −w … w and the two tails beyond, observed against the definition's probabilities. */
function fitAgainst(sample: readonly number[], b: Dec, w: number) {
  const observed = new Array<number>(2 * w + 3).fill(0);
  for (const x of sample) observed[x < -w ? 0 : x > w ? 2 * w + 2 : x + w + 1]! += 1;
  const tail = laplaceUpperTail(b, w).toNumber();
  const expected = [tail, ...Array.from({ length: 2 * w + 1 }, (_, i) => laplacePmf(b, i - w).toNumber()), tail];
  return chiSquarePValue(observed, expected);
}

describe('discrete Laplace, Canonne, Kamath & Steinke 2020, Algorithm 2 (scale t/s)', () => {
  // Pearson's χ² (@stdlib/stats-chi2gof) of 200 000 seeded draws against P(x) from Def. 2 of the
  // paper, computed in decimal.js (support/discreteLaplaceReference.ts), bins of expected count
  // below 5 pooled. Scales: below one, one, a half-integer, and the live turnout's 16 (ε = 0.5, 8 nodes).
  it.each([
    ['1/3', 1n, 3n, 3],
    ['1', 1n, 1n, 8],
    ['5/2', 5n, 2n, 15],
    ['16', 16n, 1n, 80],
    ['160/7', 160n, 7n, 100],
  ])('b = %s: 200 000 draws fit P(x) = (e^(1/b) − 1)/(e^(1/b) + 1) · e^(−|x|/b)', (_label, t, s, w) => {
    const b = new D(t.toString()).div(s.toString());
    const { pValue, bins } = fitAgainst(draws(t, s, Number(t * 7n + s), DRAWS), b, w);
    expect(bins).toBeGreaterThan(5);
    expect(pValue).toBeGreaterThan(0.001);
  });

  it.each([
    ['5/2', 5n, 2n, [3, 8, 15]],
    ['16', 16n, 1n, [16, 48, 96]],
  ])('b = %s: the tails P(|X| ≥ k) = 2e^(−k/b)/(1 + e^(−1/b)) hold (exact binomial test at each k)', (_label, t, s, ks) => {
    const b = new D(t.toString()).div(s.toString());
    const sample = draws(t, s, Number(t * 13n + s), DRAWS);
    for (const k of ks) {
      const beyond = sample.filter((x) => Math.abs(x) >= k).length;
      const p = laplaceTwoSidedTail(b, k).toNumber();
      expect(binomialTest(beyond, DRAWS, { p }).pValue, `k = ${k}: ${beyond} of ${DRAWS}, expected ${p * DRAWS}`).toBeGreaterThan(0.001);
    }
    // Symmetry: as many above zero as below (exact binomial test with p = 1/2 on the non-zero draws).
    const above = sample.filter((x) => x > 0).length;
    const below = sample.filter((x) => x < 0).length;
    expect(binomialTest(above, above + below, { p: 0.5 }).pValue).toBeGreaterThan(0.001);
  });

  it('the χ² check has power: draws at b = 5/2 do not fit the b = 2.4 law', () => {
    // Negative control: a sampler whose scale is off by 4% is caught at this size.
    expect(fitAgainst(draws(5n, 2n, 41, DRAWS), new D(12).div(5), 15).pValue).toBeLessThan(1e-6);
  });

  it('the tail check has power: b = 16 draws refute the b = 15 tail at k = 48', () => {
    const sample = draws(16n, 1n, 43, DRAWS);
    const beyond = sample.filter((x) => Math.abs(x) >= 48).length;
    expect(binomialTest(beyond, DRAWS, { p: laplaceTwoSidedTail(new D(15), 48).toNumber() }).pValue).toBeLessThan(1e-6);
  });

  it('uses a bounded amount of randomness per draw at b = 16 and returns integers', () => {
    const { random, bytes } = countingRandom(seededRandom(3));
    for (let i = 0; i < 10_000; i += 1) expect(typeof discreteLaplace(16n, 1n, random)).toBe('bigint');
    expect(bytes() / 10_000).toBeLessThan(40);
  });

  it('refuses a scale that is not a ratio of positive integers', () => {
    const random = seededRandom(1);
    expect(() => discreteLaplace(0n, 1n, random)).toThrow(RangeError);
    expect(() => discreteLaplace(1n, 0n, random)).toThrow(RangeError);
    expect(() => discreteLaplace(3 as unknown as bigint, 1n, random)).toThrow(RangeError);
  });
});
