import { describe, expect, it } from 'vitest';
import { assessElectorate, describeBounds, leadChance, makeExponentialDraw, protectionStrength } from '../../../src/mechanism/index.ts';
// decimal.js at 50 digits, cloned in the test support: an independent calculator, not the mechanism's decimal helper.
import { D as Decimal, type Dec } from './support/exactReference.ts';

const floor4 = (x: Dec) => x.toDecimalPlaces(4, Decimal.ROUND_FLOOR).toNumber();

/** a in P(i) ∝ exp(a·sᵢ) per round: (ε/k)/2 for replace-one, (ε/k)/1 for add-remove (Δ = 1; Dwork & Roth 2014, Thm 3.10). */
function scale(epsilon: string, seats: number, neighbour: 'replace-one' | 'add-remove'): Dec {
  return new Decimal(epsilon).div(seats).div(neighbour === 'replace-one' ? 2 : 1);
}

/**
 * The exponential mechanism by its definition (Dwork & Roth 2014, Def. 3.4: P(i) ∝ exp(a·sᵢ)), with k seats
 * drawn one after another without replacement: the exact chance that option 0 is among the winners, summed
 * over every ordered sequence of k distinct options. Independent of the closed forms under test.
 */
function chanceAmongWinners(scores: number[], a: Dec, seats: number): { first: Dec; any: Dec } {
  const w = scores.map((s) => Decimal.exp(a.times(s)));
  const total = (left: number[]) => left.reduce((acc, i) => acc.plus(w[i]!), new Decimal(0));
  const all = scores.map((_, i) => i);
  const first = w[0]!.div(total(all));
  let any = new Decimal(0);
  const walk = (left: number[], p: Dec, depth: number) => {
    if (depth === seats) return;
    const t = total(left);
    for (const i of left) {
      const q = p.times(w[i]!.div(t));
      if (i === 0) any = any.plus(q);
      else
        walk(
          left.filter((j) => j !== i),
          q,
          depth + 1,
        );
    }
  };
  walk(all, new Decimal(1), 0);
  return { first, any };
}

describe('leadChance: the chance that a leader is drawn, against the definition', () => {
  it.each([
    // ε, options, seats, neighbour, lead
    ['0.5', 6, 1, 'replace-one', 12],
    ['0.5', 6, 1, 'replace-one', 1],
    ['1', 3, 1, 'replace-one', 0],
    ['1', 4, 2, 'replace-one', 5],
    ['1.5', 6, 3, 'replace-one', 4],
    ['2', 5, 2, 'add-remove', 3],
    ['0.1', 7, 3, 'add-remove', 40],
  ] as const)('ε = %s, %i options, %i seats, %s, lead %i', (epsilon, d, k, neighbour, lead) => {
    const draw = makeExponentialDraw({ epsilon, options: d, seats: k, neighbour });
    const got = leadChance(draw, lead);
    const a = scale(epsilon, k, neighbour);
    // Every other option trails by exactly `lead`: scores (lead, 0, …, 0).
    const exact = chanceAmongWinners([lead, ...Array<number>(d - 1).fill(0)], a, k);
    expect(got.firstSeat).toBe(floor4(exact.first));
    expect(got.anySeat).toBe(floor4(exact.any));
    // The mechanism's own float probabilities for the same scores agree too.
    expect(draw.exactProbabilities([lead, ...Array<number>(d - 1).fill(0)])[0]).toBeCloseTo(exact.first.toNumber(), 9);
  });

  it('is a lower bound whenever the leader leads every other option by at least the lead', () => {
    const draw = makeExponentialDraw({ epsilon: '1.5', options: 5, seats: 2, neighbour: 'replace-one' });
    const a = scale('1.5', 2, 'replace-one');
    const profiles = [
      [9, 6, 6, 0, 1],
      [20, 17, 3, 3, 3],
      [5, 2, 2, 2, 2],
      [40, 37, 36, 10, 0],
    ];
    for (const p of profiles) {
      const lead = p[0]! - Math.max(...p.slice(1));
      const bound = leadChance(draw, lead);
      const exact = chanceAmongWinners(p, a, 2);
      expect(exact.first.toNumber()).toBeGreaterThanOrEqual(bound.firstSeat);
      expect(exact.any.toNumber()).toBeGreaterThanOrEqual(bound.anySeat);
    }
  });

  it('a lead of 0 gives exactly 1/d for the first seat and k/d for any seat', () => {
    const draw = makeExponentialDraw({ epsilon: '1', options: 8, seats: 3, neighbour: 'replace-one' });
    expect(leadChance(draw, 0)).toEqual({ lead: 0, firstSeat: 0.125, anySeat: 0.375 });
  });
});

describe('assessElectorate', () => {
  // Our own planning rule (src/mechanism/electorate.ts): uncertain if the 95% margin exceeds the electorate,
  // noisy if it exceeds one voter in ten (rounded, at least 1). The 95% margin for ε = 1, d = 3 is 8
  // (2·ln 38 = 7.28, rounded up; see bounds.test.ts).
  const draw = makeExponentialDraw({ epsilon: '1', options: 3, seats: 1, neighbour: 'replace-one' });
  it.each([
    [100, 'clear'],
    [75, 'clear'],
    [74, 'noisy'],
    [20, 'noisy'],
    [8, 'noisy'],
    [7, 'uncertain'],
    [1, 'uncertain'],
  ] as const)('%i expected voters → %s', (voters, level) => {
    const result = assessElectorate(draw, voters);
    expect(result.level).toBe(level);
    expect(result.margin95).toBe(8);
    expect(result.unanimous.lead).toBe(voters);
    expect(result.typical.lead).toBe(Math.max(1, Math.round(voters / 10)));
  });

  it('12 voters, 6 options, ε = 0.5: a unanimous favourite is still drawn at least 80% of the time', () => {
    const small = makeExponentialDraw({ epsilon: '0.5', options: 6, seats: 1, neighbour: 'replace-one' });
    const result = assessElectorate(small, 12);
    // 1/(1 + 5·e^(−0.25·12)) = 1/(1 + 5e^−3), by hand with decimal.js.
    const closed = new Decimal(1).div(new Decimal(5).times(Decimal.exp(-3)).plus(1));
    expect(result.unanimous.firstSeat).toBe(floor4(closed));
    expect(result.unanimous.firstSeat).toBeGreaterThanOrEqual(0.8);
    expect(result.level).toBe('uncertain'); // yet short of 95%: the margin for 95% is 19 > 12
  });
});

describe('protectionStrength', () => {
  it.each([
    ['3', 'replace-one', false, '3', 20.09],
    ['3.01', 'replace-one', true, '3.01', 20],
    ['2', 'add-remove', true, '4', 55], // how a member voted costs 2ε under add/remove
    ['1.5', 'add-remove', false, '3', 20.09],
  ] as const)('ε = %s, %s → weak %s (how voted at ε = %s, factor ≈ %s)', (epsilon, neighbour, weak, how, factor) => {
    const p = protectionStrength(makeExponentialDraw({ epsilon, options: 4, seats: 1, neighbour }));
    expect(p).toEqual({ weak, howVotedEpsilon: how, factor });
    // e^ε by decimal.js, rounded as shown (whole above 3, else 2 decimals).
    const e = Decimal.exp(how);
    expect(p.factor).toBe(e.toDecimalPlaces(e.gt(Decimal.exp(3)) ? 0 : 2, Decimal.ROUND_HALF_UP).toNumber());
  });
});

describe('describeBounds gets the singular right', () => {
  it('ε = 10 over 2 options: a lead of 1 approval gives 95% (1/(1 + e^(−5)) = 0.9933)', () => {
    const draw = makeExponentialDraw({ epsilon: '10', options: 2, seats: 1, neighbour: 'replace-one' });
    expect(draw.bounds(0.05).marginFor['0.95']).toBe(1);
    const text = describeBounds(draw.bounds(0.05), 1, 'future');
    expect(text).toContain('by at least 1 approval,');
    expect(text).not.toContain('1 approvals');
  });
});
