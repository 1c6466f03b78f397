import { describe, expect, it } from 'vitest';
import { makeExponentialDraw, type Neighbour } from '../../../src/mechanism/index.ts';
import { D, type Dec, firstSeatReference, scaleOf } from './support/exactReference.ts';

/**
 * Margin guarantees: if the leader leads every other option by ≥ m approvals,
 * P(leader) = e^(a·s₁)/Σ ≥ 1/(1 + (d − 1)e^(−a·m)) (follows from Dwork & Roth 2014,
 * Def. 3.4, since each other weight is at most e^(a(s₁ − m))). Recomputed here
 * independently with decimal.js; printed values must never overstate it.
 */
function leaderBound(d: number, a: Dec, m: number): Dec {
  return new D(1).div(new D(d - 1).times(D.exp(a.times(-m))).plus(1));
}

const make = (epsilon: string, options: number, seats = 1, neighbour: Neighbour = 'replace-one') =>
  makeExponentialDraw({ epsilon, options, seats, neighbour });

describe('margin table and needed margins', () => {
  it.each([
    ['1', 3, 1, 'replace-one'],
    ['0.5', 17, 1, 'replace-one'],
    ['2', 16, 3, 'replace-one'],
    ['1', 10, 1, 'add-remove'],
    ['10', 2, 1, 'replace-one'],
  ] as const)('ε = %s, d = %i, k = %i, %s: rounded down, monotone, and reaching 99.9%%', (epsilon, d, k, neighbour) => {
    const draw = make(epsilon, d, k, neighbour);
    const a = scaleOf(draw.perRoundScale.num, draw.perRoundScale.den);
    const { marginTable, marginFor } = draw.bounds();
    expect(marginTable[0]).toEqual({ margin: 0, minProbability: Math.floor((1 / d) * 1e4) / 1e4 });
    marginTable.forEach((row, i) => {
      const exact = leaderBound(d, a, row.margin);
      expect(exact.gte(row.minProbability)).toBe(true); // never overstated
      expect(exact.minus(row.minProbability).lt('0.0001')).toBe(true);
      if (i > 0) expect(row.margin).toBe(marginTable[i - 1]!.margin + 1);
    });
    const last = marginTable[marginTable.length - 1]!;
    expect(leaderBound(d, a, last.margin).gte('0.999')).toBe(true);
    expect(leaderBound(d, a, last.margin - 1).lt('0.999') || last.margin === 0).toBe(true);
    for (const p of ['0.9', '0.95', '0.99'] as const) {
      const m = marginFor[p];
      expect(leaderBound(d, a, m).gte(p)).toBe(true);
      if (m > 0) expect(leaderBound(d, a, m - 1).lt(p)).toBe(true); // smallest such margin
    }
  });

  it('known values: ε = 1, d = 3 needs leads of 6, 8 and 11 for 90/95/99%', () => {
    // 2·ln(2·p/(1−p)) rounded up: 2 ln 18 = 5.78, 2 ln 38 = 7.28, 2 ln 198 = 10.58.
    expect(make('1', 3).bounds().marginFor).toEqual({ '0.9': 6, '0.95': 8, '0.99': 11 });
  });

  it('the guarantee holds for the exact mechanism on real profiles (leader ahead by m)', () => {
    const draw = make('1', 5);
    const a = scaleOf(draw.perRoundScale.num, draw.perRoundScale.den);
    for (const { margin, minProbability } of draw.bounds().marginTable) {
      // Worst case (all others exactly m behind) and a looser case.
      for (const scores of [
        [30, 30 - margin, 30 - margin, 30 - margin, 30 - margin],
        [30, 30 - margin, 20 - margin, 10, 0],
      ]) {
        expect(firstSeatReference(scores, a)[0]!.gte(minProbability)).toBe(true);
      }
    }
  });

  it('k seats report per-round figures, the same as one seat at ε/k', () => {
    const three = make('1.5', 10, 3).bounds();
    const one = make('0.5', 10, 1).bounds();
    expect(three.perRoundEpsilon).toBe('0.5');
    expect({ ...three, perRoundEpsilon: '' }).toEqual({ ...one, perRoundEpsilon: '' });
    expect(make('1', 10, 3).bounds().perRoundEpsilon).toBe('1/3');
  });

  it('long tables are thinned but keep 0, the 90/95/99% margins and the 99.9% margin', () => {
    const draw = make('0.01', 1000, 10);
    const { marginTable, marginFor } = draw.bounds();
    expect(marginTable.length).toBeLessThanOrEqual(110);
    const margins = marginTable.map((r) => r.margin);
    expect(margins[0]).toBe(0);
    for (const m of Object.values(marginFor)) expect(margins).toContain(m);
    const a = scaleOf(draw.perRoundScale.num, draw.perRoundScale.den);
    const last = margins[margins.length - 1]!;
    expect(leaderBound(1000, a, last).gte('0.999')).toBe(true);
    expect(leaderBound(1000, a, last - 1).lt('0.999')).toBe(true);
    for (let i = 1; i < margins.length; i += 1) expect(margins[i]!).toBeGreaterThan(margins[i - 1]!);
  });

  it('bounds depend on no data and echo β', () => {
    const draw = make('1', 4);
    expect(draw.bounds()).toEqual(draw.bounds(0.05));
    expect(draw.bounds(0.1).beta).toBe(0.1);
    expect(draw.bounds(0.1).withinApprovals).toBeLessThan(draw.bounds(0.01).withinApprovals);
  });
});
