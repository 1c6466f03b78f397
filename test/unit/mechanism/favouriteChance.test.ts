import { describe, expect, it } from 'vitest';
import { leadChance, makeDraw, type DrawRule } from '../../../src/mechanism/index.ts';
import { D, type Dec, orderedOutcomeReference, orderedOutcomes, scaleOf } from './support/exactReference.ts';
import { pfOrderedOutcomeDecimal } from './support/pfReference.ts';

/**
 * The organiser’s side-by-side figure (leadChance), P(the favourite wins a seat) when it leads every other
 * option by `lead` and the others are level, against a brute-force sum over every ordered
 * outcome that seats the favourite, from the references in support/ (exponential mechanism:
 * Dwork & Roth 2014, Def. 3.4; permute-and-flip: McKenna & Sheldon 2020, Algorithm 1, by its
 * definition as a sum over orders), with peeling at ε/k.
 */
function bruteForce(rule: DrawRule, d: number, seats: number, epsilon: string, lead: number): number {
  const draw = makeDraw({ epsilon, options: d, seats, neighbour: 'replace-one', rule });
  const a = scaleOf(draw.perRoundScale.num, draw.perRoundScale.den);
  const scores = [lead + 2, ...new Array<number>(d - 1).fill(2)];
  let total: Dec = new D(0);
  for (const o of orderedOutcomes(d, seats)) {
    if (!o.includes(0)) continue;
    total = total.plus(rule === 'exponential' ? orderedOutcomeReference(scores, o, a) : pfOrderedOutcomeDecimal(scores, o, a));
  }
  return total.toNumber();
}

describe('leadChance under each rule: exact closed forms (rounded down to 4 decimals) against brute force', () => {
  it.each([
    ['exponential', 4, 1, '1', 3],
    ['permute-and-flip', 4, 1, '1', 3],
    ['exponential', 5, 2, '0.5', 6],
    ['permute-and-flip', 5, 2, '0.5', 6],
    ['permute-and-flip', 6, 3, '2', 1],
    ['permute-and-flip', 3, 1, '1', 0],
  ] as const)('%s, d = %i, %i seat(s), ε = %s, lead %i', (rule, d, seats, epsilon, lead) => {
    const draw = makeDraw({ epsilon, options: d, seats, neighbour: 'replace-one', rule });
    const exact = bruteForce(rule, d, seats, epsilon, lead);
    const shown = leadChance(draw, lead).anySeat;
    expect(shown).toBeLessThanOrEqual(exact + 1e-15); // never overstated
    expect(exact - shown).toBeLessThan(1e-4);
    const first = leadChance(draw, lead).firstSeat;
    const firstExact = bruteForce(rule, d, 1, epsilon, lead); // first seat at ε/k is the 1-seat law at ε/k
    if (seats === 1) expect(firstExact - first).toBeLessThan(1e-4);
  });

  it('permute-and-flip is never below the exponential mechanism for this profile', () => {
    for (const d of [2, 4, 8, 16, 40]) {
      for (const lead of [0, 1, 3, 10, 40]) {
        for (const seats of [1, Math.min(3, d - 1)]) {
          const em = leadChance(makeDraw({ epsilon: '0.8', options: d, seats, neighbour: 'replace-one' }), lead);
          const pf = leadChance(makeDraw({ epsilon: '0.8', options: d, seats, neighbour: 'replace-one', rule: 'permute-and-flip' }), lead);
          expect(pf.anySeat).toBeGreaterThanOrEqual(em.anySeat);
          expect(pf.firstSeat).toBeGreaterThanOrEqual(em.firstSeat);
        }
      }
    }
  });
});
