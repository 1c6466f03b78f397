import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { makeDraw, makeExponentialDraw, makePermuteAndFlipDraw, type Neighbour } from '../../../src/mechanism/index.ts';
import { chiSquarePValue } from './support/chiSquare.ts';
import { D, type Dec, firstSeatReference, orderedOutcomes, scaleOf } from './support/exactReference.ts';
import {
  approvalCounts,
  emFirstSeatFloat,
  expectedShortfall,
  pfFirstSeatDecimal,
  pfFirstSeatFloat,
  pfOrderedOutcomeDecimal,
} from './support/pfReference.ts';
import { seededRandom } from './support/seededRandom.ts';

/**
 * Permute-and-flip (McKenna & Sheldon, "Permute-and-Flip: A new mechanism for
 * differentially private selection", NeurIPS 2020) against references written in
 * this file's support code, never in src/mechanism:
 * - its first-seat law from the definition (sum over the orders in which i is the
 *   first success; support/pfReference.ts), by χ² on 200 000 seeded draws;
 * - report-noisy-max with exponential noise, simulated in floating point (Ding,
 *   Kifer et al., "The Permute-and-Flip Mechanism is Identical to Report-Noisy-Max
 *   with Exponential Noise", 2021);
 * - ε-DP on neighbouring count vectors (McKenna & Sheldon 2020, Thm. 1, number from memory; Dwork & Roth
 *   2014, Def. 2.4), from exact probabilities;
 * - expected shortfall never above the exponential mechanism's (McKenna & Sheldon
 *   2020: "the expected score of our mechanism is always at least as large as the
 *   exponential mechanism", abstract; the theorem there is Thm. 2 as we recall it,
 *   number from memory).
 */
const DRAWS = 200_000;

/** Adds one to a bin; an index outside the bins (a repeated winner) leaves the total short. */
function bump(bins: number[], i: number): void {
  if (i >= 0 && i < bins.length) bins[i] = (bins[i] as number) + 1;
}

const posters = approvalCounts('00033-00000002.cat');
const field = approvalCounts('00026-00000001.cat');

function pfDraw(scores: readonly number[], epsilon: string, neighbour: Neighbour = 'replace-one', seats = 1) {
  return makePermuteAndFlipDraw({ epsilon, options: scores.length, seats, neighbour });
}

function scaleNumber(epsilon: string, neighbour: Neighbour): number {
  const s = pfDraw([1, 0], epsilon, neighbour).perRoundScale;
  return Number(s.num) / Number(s.den);
}

function reference(scores: readonly number[], epsilon: string, neighbour: Neighbour): number[] {
  const draw = pfDraw(scores, epsilon, neighbour);
  if (scores.length <= 12) {
    return pfFirstSeatDecimal(scores, scaleOf(draw.perRoundScale.num, draw.perRoundScale.den)).map((p) => p.toNumber());
  }
  return pfFirstSeatFloat(scores, scaleNumber(epsilon, neighbour));
}

function firstSeatCounts(scores: readonly number[], epsilon: string, neighbour: Neighbour, seed: number, draws = DRAWS) {
  const draw = pfDraw(scores, epsilon, neighbour);
  const random = seededRandom(seed);
  const counts = new Array<number>(scores.length).fill(0);
  for (let i = 0; i < draws; i += 1) bump(counts, draw.draw(scores, random)[0] as number);
  return counts;
}

describe('the real profiles read as the dataset README says', () => {
  it('approval counts match shared/datasets/README.md (computed there by an independent script)', () => {
    expect(posters).toEqual([39, 33, 33, 33, 26, 24, 22, 19, 19, 18, 16, 16, 14, 14, 11, 11, 9]);
    expect(field).toEqual([62, 36, 26, 85, 139, 119, 33, 74, 67, 87, 21, 37, 67, 77, 64, 62]);
  });
});

describe('permute-and-flip: the reference itself', () => {
  it('two options in closed form: P(top) = 1 − e^(−a·gap)/2 (McKenna & Sheldon 2020, Algorithm 1 by hand)', () => {
    const a = new D('0.5');
    const [top, other] = pfFirstSeatDecimal([7, 3], a);
    const x = D.exp(-2);
    expect(top!.minus(new D(1).minus(x.div(2))).abs().lt('1e-40')).toBe(true);
    expect(other!.minus(x.div(2)).abs().lt('1e-40')).toBe(true);
  });

  it('the sum over subsets equals the literal average over all d! orders (d = 6, 720 orders)', () => {
    const scores = [9, 7, 7, 4, 1, 0];
    const a = new D('0.4');
    const max = Math.max(...scores);
    const p = scores.map((x) => D.exp(a.times(x - max)));
    const byOrders = scores.map(() => new D(0));
    const visit = (prefix: number[], rest: number[]) => {
      if (rest.length === 0) {
        let reach = new D(1); // probability that every option so far failed
        for (const i of prefix) {
          byOrders[i] = (byOrders[i] as Dec).plus(reach.times(p[i] as Dec));
          reach = reach.times(new D(1).minus(p[i] as Dec));
        }
        return;
      }
      rest.forEach((i, k) => visit([...prefix, i], [...rest.slice(0, k), ...rest.slice(k + 1)]));
    };
    visit([], scores.map((_, i) => i));
    const bySubsets = pfFirstSeatDecimal(scores, a);
    byOrders.forEach((x, i) => expect(x.div(720).minus(bySubsets[i] as Dec).abs().lt('1e-40')).toBe(true));
  });

  it('equal scores give the uniform law; a sum over subsets adds to 1', () => {
    expect(pfFirstSeatDecimal([4, 4, 4, 4, 4], new D(1)).every((p) => p.minus(new D(1).div(5)).abs().lt('1e-40'))).toBe(true);
    const total = pfFirstSeatDecimal([9, 9, 7, 5, 5, 3, 2, 1, 0, 0, 11, 6], new D('0.3')).reduce((x, p) => x.plus(p), new D(0));
    expect(total.minus(1).abs().lt('1e-40')).toBe(true);
  });

  it('the float reference agrees with the decimal one, and the app’s planning figures with both', () => {
    const scores = [9, 9, 7, 5, 5, 3, 2, 1, 0, 0, 11, 6];
    const dec = pfFirstSeatDecimal(scores, new D('0.25')).map((p) => p.toNumber());
    const flt = pfFirstSeatFloat(scores, 0.25);
    const app = pfDraw(scores, '0.5').exactProbabilities(scores);
    dec.forEach((p, i) => {
      expect(Math.abs(p - (flt[i] as number))).toBeLessThan(1e-13);
      expect(Math.abs(p - (app[i] as number))).toBeLessThan(1e-13);
    });
    const real = pfFirstSeatFloat(field, 0.025);
    pfDraw(field, '0.05').exactProbabilities(field).forEach((p, i) => expect(Math.abs(p - (real[i] as number))).toBeLessThan(1e-12));
  });
});

describe('permute-and-flip: goodness of fit against the definition (200 000 seeded draws each)', () => {
  it.each([
    ['d = 3, scores [2,1,0], ε = 1', [2, 1, 0], '1', 'replace-one', 101],
    ['d = 10, ε = 1', [9, 9, 7, 5, 5, 3, 2, 1, 0, 0], '1', 'replace-one', 102],
    ['d = 5, all tied (uniform first visit of the shuffle)', [3, 3, 3, 3, 3], '1', 'replace-one', 103],
    ['d = 10, add-remove, ε = 0.75', [4, 4, 3, 3, 2, 2, 1, 1, 0, 0], '0.75', 'add-remove', 104],
    ['PrefLib 00033 posters (d = 17, 65 voters), ε = 0.5', posters, '0.5', 'replace-one', 105],
    ['PrefLib 00026 field experiment (d = 16, 365 voters), ε = 0.05', field, '0.05', 'replace-one', 106],
  ] as const)('%s', (_name, scores, epsilon, neighbour, seed) => {
    const expected = reference(scores, epsilon, neighbour);
    const { pValue, bins } = chiSquarePValue(firstSeatCounts(scores, epsilon, neighbour, seed), expected);
    expect(bins).toBeGreaterThanOrEqual(3);
    expect(pValue).toBeGreaterThan(0.001);
  });

  it('the χ² check has power: permute-and-flip draws do not fit the exponential mechanism’s law', () => {
    // Negative control: same scores and scale, the other rule's probabilities (Dwork & Roth 2014, Def. 3.4).
    const scores = [9, 9, 7, 5, 5, 3, 2, 1, 0, 0];
    const em = firstSeatReference(scores, new D('0.5')).map((p) => p.toNumber());
    expect(chiSquarePValue(firstSeatCounts(scores, '1', 'replace-one', 107), em).pValue).toBeLessThan(1e-6);
  });

  it('ordered two-seat outcomes (d = 4, k = 2, ε = 2, 100 000 draws) fit peeling at ε/k', () => {
    const scores = [6, 5, 3, 0];
    const draw = pfDraw(scores, '2', 'replace-one', 2);
    const a = scaleOf(draw.perRoundScale.num, draw.perRoundScale.den);
    const outcomes = orderedOutcomes(4, 2);
    const expected = outcomes.map((o) => pfOrderedOutcomeDecimal(scores, o, a).toNumber());
    const index = new Map(outcomes.map((o, i) => [o.join(','), i]));
    const counts = new Array<number>(outcomes.length).fill(0);
    const random = seededRandom(108);
    for (let i = 0; i < 100_000; i += 1) bump(counts, index.get(draw.draw(scores, random).join(',')) ?? -1);
    expect(counts.reduce((x, y) => x + y, 0)).toBe(100_000);
    expect(chiSquarePValue(counts, expected).pValue).toBeGreaterThan(0.001);
  });
});

/**
 * Report-noisy-max with exponential noise: argmaxᵢ (sᵢ + Zᵢ), Zᵢ ~ Exponential(rate a),
 * in plain floating point (Ding, Kifer et al. 2021 show it equals permute-and-flip in law).
 */
function reportNoisyMaxExponential(scores: readonly number[], a: number, uniform: () => number): number {
  let best = 0;
  let bestKey = -Infinity;
  for (let i = 0; i < scores.length; i += 1) {
    const key = (scores[i] as number) - Math.log(1 - uniform()) / a;
    if (key > bestKey) [best, bestKey] = [i, key];
  }
  return best;
}

function uniformFrom(seed: number): () => number {
  const bytes = seededRandom(seed);
  const word = () => {
    const b = bytes(4);
    return (((b[0] as number) << 24) | ((b[1] as number) << 16) | ((b[2] as number) << 8) | (b[3] as number)) >>> 0;
  };
  return () => word() / 2 ** 32 + word() / 2 ** 64; // in [0, 1)
}

describe('permute-and-flip equals report-noisy-max with exponential noise (Ding, Kifer et al. 2021)', () => {
  it.each([
    ['d = 10, ε = 1', [9, 9, 7, 5, 5, 3, 2, 1, 0, 0], '1', 201],
    ['PrefLib 00033 posters, ε = 0.5', posters, '0.5', 202],
  ] as const)('%s: 200 000 float draws fit the exact law, and a two-sample χ² against the exact sampler passes', (_n, scores, epsilon, seed) => {
    const a = scaleNumber(epsilon, 'replace-one');
    const uniform = uniformFrom(seed);
    const rnm = new Array<number>(scores.length).fill(0);
    for (let i = 0; i < DRAWS; i += 1) bump(rnm, reportNoisyMaxExponential(scores, a, uniform));
    const expected = reference(scores, epsilon, 'replace-one');
    expect(chiSquarePValue(rnm, expected).pValue).toBeGreaterThan(0.001);
    // Two samples of equal size: each bin's share of the pair is Binomial(½) under equal laws.
    const pf = firstSeatCounts(scores, epsilon, 'replace-one', seed + 50);
    const kept = scores.map((_, i) => i).filter((i) => (pf[i] as number) + (rnm[i] as number) >= 20);
    const statistic = kept.reduce((acc, i) => acc + ((pf[i] as number) - (rnm[i] as number)) ** 2 / ((pf[i] as number) + (rnm[i] as number)), 0);
    // χ² with kept.length − 1 degrees of freedom; Wilson–Hilferty 0.999 quantile (common practice).
    const k = kept.length - 1;
    const q999 = k * (1 - 2 / (9 * k) + 3.0902 * Math.sqrt(2 / (9 * k))) ** 3;
    expect(statistic).toBeLessThan(q999);
  });
});

/** Privacy ratio, as in privacy.test.ts, with permute-and-flip's exact law under peeling. */
type Ballot = boolean[];
const SLACK = new D('1e-30');

function countsOf(ballots: Ballot[], d: number): number[] {
  const scores = new Array<number>(d).fill(0);
  for (const b of ballots) b.forEach((ticked, i) => (ticked ? bump(scores, i) : undefined));
  return scores;
}

function worstRatio(d: number, seats: number, a: Dec, x: number[], y: number[]): Dec {
  let worst = new D(0);
  for (const o of orderedOutcomes(d, seats)) {
    const px = pfOrderedOutcomeDecimal(x, o, a);
    const py = pfOrderedOutcomeDecimal(y, o, a);
    worst = D.max(worst, px.div(py), py.div(px));
  }
  return worst;
}

const setup = fc
  .integer({ min: 2, max: 5 })
  .chain((d) =>
    fc.record({
      d: fc.constant(d),
      seats: fc.integer({ min: 1, max: Math.min(2, d - 1) }),
      epsilon: fc.integer({ min: 1, max: 300 }).map((h) => (h / 100).toFixed(2)),
      ballots: fc.array(fc.array(fc.boolean(), { minLength: d, maxLength: d }), { minLength: 1, maxLength: 10 }),
      changed: fc.array(fc.boolean(), { minLength: d, maxLength: d }),
      at: fc.nat(),
    }),
  );
type Setup = typeof setup extends fc.Arbitrary<infer T> ? T : never;

const replaceOne = (s: Setup): [number[], number[]] => {
  const other = [...s.ballots];
  other[s.at % other.length] = s.changed;
  return [countsOf(s.ballots, s.d), countsOf(other, s.d)];
};
const addOne = (s: Setup): [number[], number[]] => [countsOf(s.ballots, s.d), countsOf([...s.ballots, s.changed], s.d)];

function holds(s: Setup, neighbour: Neighbour, pair: (s: Setup) => [number[], number[]], budget = 1): boolean {
  const draw = makePermuteAndFlipDraw({ epsilon: s.epsilon, options: s.d, seats: s.seats, neighbour });
  const a = scaleOf(draw.perRoundScale.num, draw.perRoundScale.den);
  const [x, y] = pair(s);
  return worstRatio(s.d, s.seats, a, x, y).lte(D.exp(new D(s.epsilon).times(budget)).times(SLACK.plus(1)));
}

const runs = { numRuns: 120, seed: 20261202 };

describe('permute-and-flip privacy: outcome ratio on neighbouring counts ≤ e^ε (McKenna & Sheldon 2020, Thm. 1)', () => {
  it('replace-one (a = ε/2k per round), one and two seats', () => {
    fc.assert(fc.property(setup, (s) => holds(s, 'replace-one', replaceOne)), runs);
  });

  it('add-remove (a = ε/k per round, monotone counts), one and two seats', () => {
    fc.assert(fc.property(setup, (s) => holds(s, 'add-remove', addOne)), runs);
  });

  it('add-remove setting under a changed ballot stays within e^(2ε), as the statement says', () => {
    fc.assert(fc.property(setup, (s) => holds(s, 'add-remove', replaceOne, 2)), runs);
  });

  it('negative control: the scale a = ε/Δ under replace-one breaks e^ε, and the check finds it', () => {
    expect(() => fc.assert(fc.property(setup, (s) => holds(s, 'add-remove', replaceOne)), runs)).toThrow(/Property failed/);
    // A concrete witness: a ballot approving options 0 and 1 becomes one approving only option 2.
    const ratio = worstRatio(3, 1, new D(1), [5, 5, 0], [4, 4, 1]);
    expect(ratio.gt(D.exp(1))).toBe(true);
  });
});

describe('permute-and-flip utility: expected shortfall never above the exponential mechanism’s (McKenna & Sheldon 2020)', () => {
  it('on random count vectors (d ≤ 8, exact decimal reference)', () => {
    fc.assert(
      fc.property(
        fc.array(fc.integer({ min: 0, max: 60 }), { minLength: 2, maxLength: 8 }),
        fc.integer({ min: 1, max: 300 }),
        (scores, h) => {
          const a = new D(h).div(200); // ε = h/100, replace-one
          const pf = pfFirstSeatDecimal(scores, a).map((p) => p.toNumber());
          const em = firstSeatReference(scores, a).map((p) => p.toNumber());
          return expectedShortfall(scores, pf) <= expectedShortfall(scores, em) + 1e-12;
        },
      ),
      { numRuns: 200, seed: 7 },
    );
  });

  it.each(['0.05', '0.1', '0.5', '1', '2'])('on both real profiles at ε = %s', (epsilon) => {
    for (const scores of [posters, field]) {
      const a = scaleNumber(epsilon, 'replace-one');
      expect(expectedShortfall(scores, pfFirstSeatFloat(scores, a))).toBeLessThanOrEqual(
        expectedShortfall(scores, emFirstSeatFloat(scores, a)) + 1e-12,
      );
    }
  });

  it('a two-option race at ε = 0.03 with a lead of 200: shortfall 200x/(1+x) vs 200x/2, x = e^(−3)', () => {
    // Closed forms: exponential mechanism P(other) = x/(1+x); permute-and-flip P(other) = x/2 (the
    // leader comes first half the time and always succeeds). About 9.49 vs 4.98 approvals.
    const scores = [200, 0];
    const a = scaleNumber('0.03', 'replace-one');
    const x = Math.exp(-3);
    expect(expectedShortfall(scores, pfFirstSeatFloat(scores, a))).toBeCloseTo((200 * x) / 2, 10);
    expect(expectedShortfall(scores, emFirstSeatFloat(scores, a))).toBeCloseTo((200 * x) / (1 + x), 10);
    expect(expectedShortfall(scores, pfFirstSeatFloat(scores, a))).toBeCloseTo(4.98, 2);
  });
});

describe('permute-and-flip bounds', () => {
  it('the leader floor is never below the exponential mechanism’s, and is attained by the two-level profile', () => {
    for (const d of [2, 3, 5, 16, 17, 50]) {
      for (const epsilon of ['0.1', '0.5', '1', '3']) {
        const pf = makePermuteAndFlipDraw({ epsilon, options: d, seats: 1, neighbour: 'replace-one' }).bounds();
        const em = makeExponentialDraw({ epsilon, options: d, seats: 1, neighbour: 'replace-one' }).bounds();
        expect(pf.withinApprovals).toBe(em.withinApprovals);
        expect(pf.marginFor['0.95']).toBeLessThanOrEqual(em.marginFor['0.95']);
        expect(pf.marginFor['0.99']).toBeLessThanOrEqual(em.marginFor['0.99']);
        const a = scaleNumber(epsilon, 'replace-one');
        for (const row of pf.marginTable.filter((_, i) => i % 7 === 0).slice(0, 6)) {
          // Others tied exactly `margin` below the leader: the floor is the exact probability, rounded down.
          const scores = [row.margin + 1, ...new Array<number>(d - 1).fill(1)];
          const exact = d <= 17 ? (d <= 12 ? reference(scores, epsilon, 'replace-one') : pfFirstSeatFloat(scores, a))[0]! : null;
          if (exact !== null) {
            expect(row.minProbability).toBeLessThanOrEqual(exact + 1e-12);
            expect(exact - row.minProbability).toBeLessThan(1.5e-4);
          }
          const emRow = em.marginTable.find((r) => r.margin === row.margin);
          if (emRow) expect(row.minProbability).toBeGreaterThanOrEqual(emRow.minProbability);
        }
      }
    }
  });

  it('the margin for a 95% chance is reached by the exact law and not one approval earlier (d = 16, ε = 0.5)', () => {
    const pf = makePermuteAndFlipDraw({ epsilon: '0.5', options: 16, seats: 1, neighbour: 'replace-one' }).bounds();
    const m = pf.marginFor['0.95'];
    const at = (margin: number) => pfFirstSeatFloat([margin, ...new Array<number>(15).fill(0)], 0.25)[0]!;
    expect(at(m)).toBeGreaterThanOrEqual(0.95);
    expect(at(m - 1)).toBeLessThan(0.95);
  });

  it('the draw rule is checked in the constructor', () => {
    expect(() => makeDraw({ epsilon: '1', options: 3, seats: 1, neighbour: 'replace-one', rule: 'coin' as never })).toThrow(/draw rule/);
    expect(makeDraw({ epsilon: '1', options: 3, seats: 1, neighbour: 'replace-one' }).rule).toBe('exponential');
  });
});
