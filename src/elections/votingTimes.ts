import type { Election } from './electionRepo.ts';

/**
 * When voting really opened and closed, from the stored times and the clock, never from when
 * an organiser pressed a button:
 *  - opened: the later of the planned opening and the moment the election was opened
 *    ("open now" after a planned time in the past opens at that moment; a schedule set at
 *    10:00 for 12:00 opens at 12:00), once that moment has passed;
 *  - closed: an early close at the moment it was made; otherwise the closing time, once passed
 *    (a tally after the closing time stamps closed_at later, but voting had ended already).
 * Null while not yet known. An election closed before its scheduled opening never opened.
 */
export interface VotingTimes {
  opened: Date | null;
  closed: Date | null;
  closedEarly: boolean;
}

type Times = Pick<Election, 'state' | 'opensAt' | 'closesAt' | 'openedAt' | 'closedAt'>;

export function votingTimes(e: Times, now: Date): VotingTimes {
  if (e.state === 'draft') return { opened: null, closed: null, closedEarly: false };
  const start = e.openedAt && e.openedAt > e.opensAt ? e.openedAt : e.opensAt;
  const early = e.closedAt !== null && e.closedAt < e.closesAt;
  const closed = early ? e.closedAt : e.closesAt <= now || e.state !== 'open' ? e.closesAt : null;
  const openedBy = closed && closed < now ? closed : now;
  const opened = start <= openedBy && (!closed || start < closed) ? start : null;
  return { opened, closed, closedEarly: early };
}
