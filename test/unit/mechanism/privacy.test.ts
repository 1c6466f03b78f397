import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { makeExponentialDraw, type ExponentialDraw, type Neighbour } from '../../../src/mechanism/index.ts';
import { D, type Dec, orderedOutcomeFromWeights, orderedOutcomes, scaleOf, weightsOf } from './support/exactReference.ts';

/**
 * ε-differential privacy of the exponential mechanism (Dwork & Roth 2014, Thm. 3.10;
 * Def. 2.4): for neighbouring ballot profiles D, D′ and every outcome o,
 * P(o | D) ≤ e^ε · P(o | D′). Probabilities are exact closed forms in decimal.js at
 * 50 digits, taken at the scale the implementation chose, for every ordered
 * multi-seat outcome (peeling, basic composition: Dwork & Roth 2014, Thm. 3.16).
 */
type Ballot = boolean[];
const SLACK = new D('1e-30'); // far below any real violation, far above 50-digit rounding

function countsOf(ballots: Ballot[], d: number): number[] {
  const scores = new Array(d).fill(0);
  for (const b of ballots) b.forEach((ticked, i) => (scores[i] += ticked ? 1 : 0));
  return scores;
}

/** Largest ratio P(o|D)/P(o|D′) over all ordered outcomes and both directions. */
function worstRatio(draw: ExponentialDraw, scoresA: number[], scoresB: number[]): Dec {
  const a = scaleOf(draw.perRoundScale.num, draw.perRoundScale.den);
  const wa = weightsOf(scoresA, a);
  const wb = weightsOf(scoresB, a);
  let worst = new D(0);
  for (const o of orderedOutcomes(draw.options, draw.seats)) {
    const pa = orderedOutcomeFromWeights(wa, o);
    const pb = orderedOutcomeFromWeights(wb, o);
    worst = D.max(worst, pa.div(pb), pb.div(pa));
  }
  return worst;
}

const epsilonText = fc.integer({ min: 1, max: 300 }).map((h) => (h / 100).toFixed(2)); // 0.01 … 3.00
const setup = fc.integer({ min: 2, max: 5 }).chain((d) =>
  fc.record({
    d: fc.constant(d),
    seats: fc.integer({ min: 1, max: Math.min(3, d - 1) }),
    epsilon: epsilonText,
    ballots: fc.array(fc.array(fc.boolean(), { minLength: d, maxLength: d }), { minLength: 1, maxLength: 12 }),
    changed: fc.array(fc.boolean(), { minLength: d, maxLength: d }),
    at: fc.nat(),
  }),
);
type Setup = typeof setup extends fc.Arbitrary<infer T> ? T : never;

function replaceOne(s: Setup): [number[], number[]] {
  const other = [...s.ballots];
  other[s.at % other.length] = s.changed;
  return [countsOf(s.ballots, s.d), countsOf(other, s.d)];
}

function addOne(s: Setup): [number[], number[]] {
  return [countsOf(s.ballots, s.d), countsOf([...s.ballots, s.changed], s.d)];
}

function holds(s: Setup, neighbour: Neighbour, pair: (s: Setup) => [number[], number[]], budget: string): boolean {
  const draw = makeExponentialDraw({ epsilon: s.epsilon, options: s.d, seats: s.seats, neighbour });
  const [x, y] = pair(s);
  const bound = D.exp(new D(s.epsilon).times(budget)).times(SLACK.plus(1));
  return worstRatio(draw, x, y).lte(bound);
}

const runs = { numRuns: 150, seed: 20240611 };

describe('privacy: ratio of outcome probabilities on neighbouring profiles (Dwork & Roth 2014, Thm. 3.10)', () => {
  it('replace-one (a = ε/2 per round): every ordered outcome within e^ε', () => {
    fc.assert(
      fc.property(setup, (s) => holds(s, 'replace-one', replaceOne, '1')),
      runs,
    );
  });

  it('add-remove (a = ε per round, monotone counts): adding or removing a ballot stays within e^ε', () => {
    // Removal is the same pair read the other way; worstRatio checks both directions.
    fc.assert(
      fc.property(setup, (s) => holds(s, 'add-remove', addOne, '1')),
      runs,
    );
  });

  it('add-remove setting under a changed ballot stays within e^(2ε), as the statement says', () => {
    fc.assert(
      fc.property(setup, (s) => holds(s, 'add-remove', replaceOne, '2')),
      runs,
    );
  });

  it('negative control: the scale a = ε/Δ under replace-one breaks e^ε, and the property finds it', () => {
    expect(() =>
      fc.assert(
        fc.property(setup, (s) => holds(s, 'add-remove', replaceOne, '1')),
        runs,
      ),
    ).toThrow(/Property failed/);
    // A concrete witness: a ballot approving options 0 and 1 becomes one approving only option 2.
    const draw = makeExponentialDraw({ epsilon: '1', options: 3, seats: 1, neighbour: 'add-remove' });
    expect(worstRatio(draw, [5, 5, 0], [4, 4, 1]).gt(D.exp(1))).toBe(true);
  });
});
