import { describe, expect, it } from 'vitest';
import { votingTimes } from '../../../src/elections/votingTimes.ts';

const t = (hhmm: string) => new Date(`2026-06-01T${hhmm}:00Z`);
type State = 'draft' | 'open' | 'closed' | 'tallied' | 'published';
const e = (state: State, opensAt: string, closesAt: string, openedAt: string | null, closedAt: string | null) => ({
  state,
  opensAt: t(opensAt),
  closesAt: t(closesAt),
  openedAt: openedAt ? t(openedAt) : null,
  closedAt: closedAt ? t(closedAt) : null,
});
const iso = (d: Date | null) => (d ? d.toISOString().slice(11, 16) : null);

/** When voting really opened and closed, never when a button was pressed. */
describe('votingTimes', () => {
  it.each([
    // name, election, now, opened, closed, early
    ['a draft knows nothing yet', e('draft', '12:00', '18:00', null, null), '13:00', null, null, false],
    ['scheduled at 10:00 for 12:00, before 12:00', e('open', '12:00', '18:00', '10:00', null), '11:00', null, null, false],
    ['scheduled at 10:00 for 12:00, after 12:00: opened 12:00', e('open', '12:00', '18:00', '10:00', null), '13:00', '12:00', null, false],
    ['"open now" at 10:30 after a planned 09:00: opened 10:30', e('open', '09:00', '18:00', '10:30', null), '11:00', '10:30', null, false],
    ['closing time passed: closed at the closing time', e('open', '09:00', '18:00', '09:00', null), '19:00', '09:00', '18:00', false],
    ['closed early at 15:00', e('closed', '09:00', '18:00', '09:00', '15:00'), '16:00', '09:00', '15:00', true],
    ['tallied at 19:30 after an 18:00 close: closed 18:00', e('tallied', '09:00', '18:00', '09:00', '19:30'), '20:00', '09:00', '18:00', false],
    ['closed before a scheduled opening: never opened', e('closed', '12:00', '18:00', '10:00', '11:00'), '13:00', null, '11:00', true],
  ] as const)('%s', (_name, election, now, opened, closed, early) => {
    const r = votingTimes(election, t(now));
    expect([iso(r.opened), iso(r.closed), r.closedEarly]).toEqual([opened, closed, early]);
  });
});
