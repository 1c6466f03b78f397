import { describe, expect, it } from 'vitest';
import { makeExponentialDraw } from '../../../src/mechanism/index.ts';
import { drawWarning, electorateFacts, protectionWarning } from '../../../src/web/presenters/electorate.ts';
import { D as Decimal } from '../mechanism/support/exactReference.ts';

const settings = (o: Partial<{ epsilon: string; seats: number; expectedVoters: number | null; neighbour: 'replace-one' | 'add-remove' }> = {}) => ({
  epsilon: o.epsilon ?? '1',
  seats: o.seats ?? 1,
  neighbour: o.neighbour ?? ('replace-one' as const),
  expectedVoters: o.expectedVoters === undefined ? 40 : o.expectedVoters,
  options: ['Fix the lift', 'Repaint the stairwell', 'New bike shed', 'Brighter car park lights'].map((label, position) => ({
    position,
    label,
    description: '',
  })),
});

describe('the words around the guidance numbers', () => {
  it('gets the singulars right: 1 voter, 1 approval', () => {
    const w = electorateFacts(makeExponentialDraw({ epsilon: '1', options: 4, seats: 1, neighbour: 'replace-one' }), 1);
    expect(w.facts[0]).toMatch(/^If all 1 voter approve/);
    expect(w.facts[1]).toContain('by 1 approval (about one voter in ten)');
    expect(w.facts.join(' ')).not.toMatch(/\b1 (voters|approvals)\b/);
  });

  it('with several seats speaks of seats, and of winners in the plural', () => {
    const draw = makeExponentialDraw({ epsilon: '3', options: 4, seats: 2, neighbour: 'replace-one' });
    const w = electorateFacts(draw, 400);
    expect(w.level).toBe('clear');
    expect(w.facts[0]).toMatch(/takes one of the 2 seats [\d.]+% of the time \(the first seat [\d.]+%\)/);
    expect(w.message).toContain('The winners are still drawn');
  });

  it('before the draw, without a visible count, uses the expected electorate and says so', () => {
    const w = drawWarning(settings({ epsilon: '0.5', expectedVoters: 12 }), null)!;
    expect(w.basis).toBe(
      'You are not shown the turnout before the draw, so these figures are for the 12 voters you expected. If fewer voted, chance plays a larger part.',
    );
    // 4 options, a = 0.25, lead 12: 1/(1 + 3e^(−3)) (Dwork & Roth 2014, Def. 3.4), rounded down to 0.1%.
    const p = new Decimal(1).div(new Decimal(3).times(Decimal.exp(-3)).plus(1));
    expect(w.facts[0]).toContain(`that option is drawn ${p.times(100).toDecimalPlaces(1, Decimal.ROUND_FLOOR).toFixed(1)}% of the time`);
    expect(drawWarning(settings({ expectedVoters: null }), null)).toBeNull();
  });

  it('with a count the organiser may see, warns when it is far below the expectation', () => {
    const low = drawWarning(settings({ expectedVoters: 40 }), 12)!;
    expect(low.heading).toBe('Turnout is far below the 40 voters you expected');
    expect(low.basis).toBe('These figures are for the 12 ballots cast, not the 40 voters you expected.');
    expect(low.facts[0]).toMatch(/^If all 12 voters approve/);
    const fine = drawWarning(settings({ expectedVoters: 40 }), 35)!;
    expect(fine.heading).not.toContain('far below');
    expect(fine.basis).toBe('These figures are for the 35 ballots cast.');
  });

  it('warns of weak protection above ε = 3 for how a member voted, including 2ε under add/remove', () => {
    const at = (epsilon: string, neighbour: 'replace-one' | 'add-remove') =>
      protectionWarning(makeExponentialDraw({ epsilon, options: 4, seats: 1, neighbour }));
    expect(at('3', 'replace-one')).toBeNull();
    expect(at('5', 'replace-one')!.message).toContain('protected at ε = 5: one member’s ballot can make any result up to about 148 times'); // e^5 = 148.41
    expect(at('2', 'add-remove')!.message).toContain('protected at ε = 4'); // a changed ballot costs 2ε under add/remove
  });
});
