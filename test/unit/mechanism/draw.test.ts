import { describe, expect, it } from 'vitest';
import { makeExponentialDraw } from '../../../src/mechanism/index.ts';
import { chiSquarePValue } from './support/chiSquare.ts';
import { seededRandom } from './support/seededRandom.ts';

describe('makeExponentialDraw', () => {
  it('bundles the draw with its privacy cost (Dwork & Roth 2014, Thm. 3.16 for k seats)', () => {
    const draw = makeExponentialDraw({ epsilon: '1.2', options: 6, seats: 3, neighbour: 'add-remove' });
    expect(draw.privacy).toEqual({
      epsilon: '1.2',
      perRoundEpsilon: '0.4',
      whetherVoted: '1.2',
      howVoted: '2.4',
      composition: 'basic',
    });
    expect(draw.perRoundScale).toEqual({ num: 2n, den: 5n });
    expect(Object.isFrozen(draw)).toBe(true);
    expect(draw.epsilon).toEqual({ text: '1.2', num: 6n, den: 5n });
  });

  it('draws k distinct winners in seat order, reproducibly from a seed', () => {
    const draw = makeExponentialDraw({ epsilon: '2', options: 8, seats: 5, neighbour: 'replace-one' });
    const scores = [10, 9, 9, 4, 3, 3, 0, 0];
    for (let seed = 0; seed < 200; seed += 1) {
      const winners = draw.draw(scores, seededRandom(seed));
      expect(winners).toHaveLength(5);
      expect(new Set(winners).size).toBe(5);
      expect(winners.every((w) => Number.isInteger(w) && w >= 0 && w < 8)).toBe(true);
      expect(draw.draw(scores, seededRandom(seed))).toEqual(winners);
    }
  });

  it('breaks ties by randomness alone: equal top scores win equally often (χ², 60 000 draws)', () => {
    // Exponential mechanism: equal scores have equal weight (McSherry & Talwar 2007).
    const draw = makeExponentialDraw({ epsilon: '1', options: 4, seats: 1, neighbour: 'replace-one' });
    const random = seededRandom(77);
    const counts = [0, 0, 0, 0];
    for (let i = 0; i < 60_000; i += 1) counts[draw.draw([5, 5, 5, 5], random)[0]!]! += 1;
    expect(chiSquarePValue(counts, [0.25, 0.25, 0.25, 0.25]).pValue).toBeGreaterThan(0.001);
    expect(draw.exactProbabilities([5, 5, 5, 5])).toEqual([0.25, 0.25, 0.25, 0.25]);
  });

  it('does not depend on the order of the options', () => {
    const draw = makeExponentialDraw({ epsilon: '1', options: 3, seats: 1, neighbour: 'replace-one' });
    const forward = draw.exactProbabilities([2, 1, 0]);
    expect(draw.exactProbabilities([0, 1, 2])).toEqual([...forward].reverse());
  });
});
