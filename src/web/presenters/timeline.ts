import type { AuditRow } from '../../elections/audit.ts';
import type { Election } from '../../elections/electionRepo.ts';
import { votingTimes } from '../../elections/votingTimes.ts';
import { shownTime, type ShownTime } from './publicTime.ts';

export interface TimelineEntry {
  label: string;
  at: ShownTime;
}

const LABELS: Record<string, string> = {
  created: 'Election set up',
  tallied: 'Result drawn: sealed ballots counted and the winners drawn',
  published: 'Result published',
  shredded: 'Sealed ballots, the tally key and its key file deleted',
  'closing-extended': 'Closing time extended',
  'description-edited': 'Description corrected',
};

type TimedElection = Pick<Election, 'state' | 'opensAt' | 'closesAt' | 'openedAt' | 'closedAt' | 'timeZone'>;

/**
 * The public timeline: what happened, when it really happened. Opening and closing are not
 * read from when a button was pressed but from votingTimes (a schedule set at 10:00 for 12:00
 * shows 12:00; reaching the closing time shows the closing time; an early close shows the
 * moment of closing). Only labels and times are shown; details stay on the organiser's record.
 */
export function timelineView(events: readonly AuditRow[], e: TimedElection, now: Date): TimelineEntry[] {
  const times = votingTimes(e, now);
  const entries: { label: string; at: Date }[] = [];
  for (const ev of events) {
    // The draw is stamped with the whole minute it becomes visible, so it is listed from that minute on.
    if (ev.at > now) continue;
    if (ev.action === 'closing-extended' && typeof ev.detail.closesAt === 'string') {
      entries.push({ label: `Closing time extended to ${shownTime(new Date(ev.detail.closesAt), e.timeZone).text}`, at: ev.at });
    } else if (ev.action in LABELS) {
      entries.push({ label: LABELS[ev.action]!, at: ev.at });
    }
  }
  if (times.opened) entries.push({ label: 'Voting opened', at: times.opened });
  if (times.closed && times.opened) entries.push({ label: times.closedEarly ? 'Voting closed early' : 'Voting closed', at: times.closed });
  if (times.closed && !times.opened) entries.push({ label: 'Voting called off before it opened', at: times.closed });
  // Stable sort by time: events recorded in the same instant keep the order they were recorded in.
  return entries
    .map((entry, i) => ({ entry, i }))
    .sort((a, b) => a.entry.at.getTime() - b.entry.at.getTime() || a.i - b.i)
    .map(({ entry }) => ({ label: entry.label, at: shownTime(entry.at, e.timeZone) }));
}
