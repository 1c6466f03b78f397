import { describe, expect, it } from 'vitest';
import {
  buildPublicStatement,
  checkBudget,
  howVotedCost,
  ledgerTotals,
  makeExponentialDraw,
  recheckStatement,
  sumEpsilons,
  type LedgerEntry,
} from '../../../src/mechanism/index.ts';

const at = (iso: string) => new Date(iso);
const entry = (iso: string, how: string, whether: string, turnout = false): LedgerEntry => ({
  chargedAt: at(iso),
  howVotedEpsilon: how,
  whetherVotedEpsilon: whether,
  unprotected: turnout ? ['anyone-voted', 'exact-turnout'] : ['anyone-voted'],
});

describe('privacy ledger arithmetic (basic composition, Dwork & Roth 2014, Thm 3.16)', () => {
  it('adds ε exactly, with no binary rounding', () => {
    expect(sumEpsilons(['0.1', '0.2'])).toBe('0.3'); // 0.1 + 0.2 in binary floating point is 0.30000000000000004
    expect(sumEpsilons(['0.5', '0.5'])).toBe('1');
    expect(sumEpsilons([])).toBe('0');
    expect(sumEpsilons(Array.from({ length: 1000 }, () => '0.0001'))).toBe('0.1');
    expect(() => sumEpsilons(['1e3'])).toThrow();
  });

  it('charges how-voted at 2ε under add/remove, as the draw states', () => {
    for (const eps of ['0.01', '0.5', '1', '2.5', '10']) {
      for (const neighbour of ['replace-one', 'add-remove'] as const) {
        const draw = makeExponentialDraw({ epsilon: eps, options: 3, seats: 1, neighbour });
        expect(howVotedCost(eps, neighbour)).toBe(draw.privacy.howVoted);
      }
    }
  });

  it('totals the 12 months up to the draw, counting unprotected releases apart', () => {
    const entries = [
      entry('2025-05-31T10:00:00Z', '3', '3'), // more than 12 months before: left out
      entry('2025-06-02T10:00:00Z', '1', '0.5', true),
      entry('2026-01-10T10:00:00Z', '0.25', '0.25'),
      entry('2026-06-02T10:00:00Z', '9', '9'), // after `at`: left out
    ];
    const t = ledgerTotals(entries, at('2026-06-01T12:34:56Z'));
    expect(t).toEqual({
      windowStart: '2025-06-01T12:34Z',
      windowEnd: '2026-06-01T12:34Z',
      draws: 2,
      howVotedEpsilon: '1.25',
      whetherVotedEpsilon: '0.75',
      anyoneVotedReleases: 2,
      exactTurnoutReleases: 1,
    });
  });

  it('refuses only when the projected total passes the budget, counting elections not yet drawn', () => {
    expect(checkBudget({ spent: '8', pending: [], next: '2', budget: '10' })).toEqual({ projected: '10', budget: '10', exceeds: false });
    expect(checkBudget({ spent: '8', pending: ['1'], next: '1.0001', budget: '10' }).exceeds).toBe(true);
  });
});

describe('recheckStatement', () => {
  const draw = makeExponentialDraw({ epsilon: '0.8', options: 4, seats: 2, neighbour: 'add-remove' });
  const ledger = {
    groupId: '6a1f0d2e-3b4c-4d5e-8f60-718293a4b5c6',
    groupName: 'Tenants',
    ...ledgerTotals([entry('2026-03-01T10:00:00Z', '1.6', '0.8')], at('2026-03-01T10:00:30Z')),
  };
  const statement = buildPublicStatement({
    draw,
    electionId: '0b1c2d3e-4f50-4a6b-9c7d-8e9fa0b1c2d3',
    electionTitle: 'Repairs this spring',
    keyId: '0123456789abcdef',
    drawSequence: 3,
    drawnAt: '2026-03-01T10:00Z',
    optionLabels: ['Roof', 'Lift', 'Boiler', 'Doors'],
    winners: [2, 0],
    publishedTurnout: null,
    ledger,
  });

  it('finds every figure consistent in a statement the builder made', () => {
    const checks = recheckStatement(statement);
    expect(checks.filter((c) => !c.ok)).toEqual([]);
    expect(checks.length).toBeGreaterThanOrEqual(9);
  });

  it.each([
    ['a bound', (s: typeof statement) => (s.bounds.withinApprovals += 0.01)],
    ['a margin row', (s: typeof statement) => (s.bounds.marginTable[1]!.minProbability = 0.99)],
    ['the how-voted ε', (s: typeof statement) => (s.privacy.howVoted.epsilon = '0.8')],
    ['the scale', (s: typeof statement) => (s.mechanism.perRoundScale = '0.2')],
    ['a winner not among the options', (s: typeof statement) => (s.released.winners = ['Roof', 'Gate'])],
    ['the ledger total below this draw', (s: typeof statement) => (s.ledger.howVotedEpsilon = '1.5')],
  ])('catches a changed %s', (_name, change) => {
    const copy = structuredClone(statement);
    change(copy);
    expect(recheckStatement(copy).some((c) => !c.ok)).toBe(true);
  });
});
