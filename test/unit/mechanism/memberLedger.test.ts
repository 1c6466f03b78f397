import { describe, expect, it } from 'vitest';
import { checkMemberBudget, mostSpentByAMember, type LedgerEntry } from '../../../src/mechanism/index.ts';

const at = new Date('2027-06-01T12:00:00Z');
const entry = (iso: string, how: string, whether = how, turnout = false): LedgerEntry => ({
  chargedAt: new Date(iso),
  howVotedEpsilon: how,
  whetherVotedEpsilon: whether,
  unprotected: turnout ? ['anyone-voted', 'exact-turnout'] : ['anyone-voted'],
});

/**
 * Basic composition (Dwork & Roth 2014, Thm 3.16) bounds each member by the sum of the ε of the
 * draws over them; the electorate's figure is the largest such sum. Values below are worked by hand.
 */
describe('the ledger per member', () => {
  it('takes the most of each total over members, field by field, within the 12 months', () => {
    const byMember = new Map<string, LedgerEntry[]>([
      ['ann', [entry('2027-01-01T00:00:00Z', '4', '1'), entry('2027-03-01T00:00:00Z', '0.5', '0.5')]], // how 4.5, whether 1.5, 2 draws
      ['bo', [entry('2027-02-01T00:00:00Z', '1', '3', true), entry('2027-04-01T00:00:00Z', '1'), entry('2027-05-01T00:00:00Z', '1')]], // how 3, whether 5, 3 draws
      ['cox', [entry('2026-05-31T00:00:00Z', '9')]], // older than 12 months: nothing
      ['dee', []],
    ]);
    expect(mostSpentByAMember(byMember, at)).toMatchObject({
      howVotedEpsilon: '4.5',
      whetherVotedEpsilon: '5',
      draws: 3,
      anyoneVotedReleases: 3,
      exactTurnoutReleases: 1,
      windowEnd: '2027-06-01T12:00Z',
    });
    expect(mostSpentByAMember(new Map(), at)).toMatchObject({ howVotedEpsilon: '0', draws: 0 });
  });

  it('refuses when any one member would pass the budget, counting pending draws, and says how many', () => {
    const members = new Map([
      ['ann', { spent: ['4', '4'], pending: [] as string[] }],
      ['bo', { spent: ['4'], pending: ['4'] }],
      ['cox', { spent: [] as string[], pending: [] as string[] }],
    ]);
    expect(checkMemberBudget({ members, next: '2', budget: '10' })).toEqual({
      projected: '10',
      budget: '10',
      exceeds: false,
      members: 3,
      membersOver: 0,
      mostSpent: '8',
    });
    expect(checkMemberBudget({ members, next: '2.0001', budget: '10' })).toMatchObject({ projected: '10.0001', exceeds: true, membersOver: 2 });
  });
});
