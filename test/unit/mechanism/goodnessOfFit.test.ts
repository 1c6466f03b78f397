import { describe, expect, it } from 'vitest';
import { makeExponentialDraw, type Neighbour } from '../../../src/mechanism/index.ts';
import { chiSquarePValue } from './support/chiSquare.ts';
import { firstSeatReference, orderedOutcomeReference, orderedOutcomes, scaleOf } from './support/exactReference.ts';
import { seededRandom } from './support/seededRandom.ts';

const DRAWS = 200_000;
const EXTRA_DRAWS = 100_000; // for the checks beyond d = 3, 10, 50, to keep the suite quick

/**
 * The sampler's output law against the closed form (McSherry & Talwar 2007;
 * Dwork & Roth 2014, Def. 3.4), computed independently with decimal.js, by
 * Pearson's χ² (@stdlib/stats-chi2gof) with bins of expected count < 5 merged.
 */
function firstSeatFit(scores: number[], epsilon: string, neighbour: Neighbour, seed: number, draws: number) {
  const draw = makeExponentialDraw({ epsilon, options: scores.length, seats: 1, neighbour });
  const a = scaleOf(draw.perRoundScale.num, draw.perRoundScale.den);
  const expected = firstSeatReference(scores, a).map((p) => p.toNumber());
  const random = seededRandom(seed);
  const counts = new Array(scores.length).fill(0);
  for (let i = 0; i < draws; i += 1) counts[draw.draw(scores, random)[0]!] += 1;
  return chiSquarePValue(counts, expected);
}

const spread50 = Array.from({ length: 50 }, (_, i) => i);

describe('goodness of fit of the exact sampler (seeded draws)', () => {
  it.each([
    ['d = 3, scores [2,1,0], ε = 1, 200 000 draws', [2, 1, 0], '1', 'replace-one', 11, DRAWS],
    ['d = 10, ε = 1, 200 000 draws', [9, 9, 7, 5, 5, 3, 2, 1, 0, 0], '1', 'replace-one', 12, DRAWS],
    ['d = 50, scores 0..49, ε = 0.5, 200 000 draws', spread50, '0.5', 'replace-one', 13, DRAWS],
    ['d = 10, add-remove, ε = 0.75, 100 000 draws', [4, 4, 3, 3, 2, 2, 1, 1, 0, 0], '0.75', 'add-remove', 14, EXTRA_DRAWS],
    [
      'd = 10, scores near 10^6 with huge gaps, ε = 1.25, 100 000 draws',
      [1_000_000, 999_999, 999_997, 999_990, 500_000, 3, 2, 1, 0, 0],
      '1.25',
      'replace-one',
      15,
      EXTRA_DRAWS,
    ],
  ] as const)('%s', (_name, scores, epsilon, neighbour, seed, draws) => {
    const { pValue, bins } = firstSeatFit([...scores], epsilon, neighbour, seed, draws);
    expect(bins).toBeGreaterThanOrEqual(2);
    expect(pValue).toBeGreaterThan(0.001);
  });

  it('the χ² check has power: draws at ε = 1 do not fit the ε = 0.9 law (d = 10, 100 000 draws)', () => {
    // Negative control: expected probabilities at a slightly different scale must be rejected.
    const scores = [9, 9, 7, 5, 5, 3, 2, 1, 0, 0];
    const draw = makeExponentialDraw({ epsilon: '1', options: 10, seats: 1, neighbour: 'replace-one' });
    const expected = firstSeatReference(scores, scaleOf(9n, 20n)).map((p) => p.toNumber());
    const random = seededRandom(21);
    const counts = new Array(10).fill(0);
    for (let i = 0; i < EXTRA_DRAWS; i += 1) counts[draw.draw(scores, random)[0]!] += 1;
    expect(chiSquarePValue(counts, expected).pValue).toBeLessThan(1e-6);
  });

  it('ordered two-seat outcomes (d = 4, k = 2, ε = 2, 100 000 draws) fit the peeling law', () => {
    // Each round is the exponential mechanism at ε/k on the options left (basic composition).
    const scores = [6, 5, 3, 0];
    const draw = makeExponentialDraw({ epsilon: '2', options: 4, seats: 2, neighbour: 'replace-one' });
    const a = scaleOf(draw.perRoundScale.num, draw.perRoundScale.den);
    const outcomes = orderedOutcomes(4, 2);
    const expected = outcomes.map((o) => orderedOutcomeReference(scores, o, a).toNumber());
    const key = (o: readonly number[]) => o.join(',');
    const index = new Map(outcomes.map((o, i) => [key(o), i]));
    const counts = new Array(outcomes.length).fill(0);
    const random = seededRandom(31);
    for (let i = 0; i < EXTRA_DRAWS; i += 1) counts[index.get(key(draw.draw(scores, random))) ?? -1] += 1;
    // A repeated winner would have no bin and land on index -1.
    expect(counts.reduce((x, y) => x + y, 0)).toBe(EXTRA_DRAWS);
    expect(chiSquarePValue(counts, expected).pValue).toBeGreaterThan(0.001);
  });
});
