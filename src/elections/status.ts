import type { Election } from './electionRepo.ts';

/**
 * What the organiser sees, derived from the stored state and the clock:
 * an 'open' election is "scheduled" before its opening time and "voting ended" after its closing time,
 * because casting follows acceptsBallotsAt, not a background job.
 */
export type ElectionStatus = 'draft' | 'scheduled' | 'open' | 'voting-ended' | 'tallied' | 'published';

export const STATUS_LABELS: Readonly<Record<ElectionStatus, string>> = Object.freeze({
  draft: 'Draft',
  scheduled: 'Scheduled',
  open: 'Open for voting',
  'voting-ended': 'Voting ended',
  tallied: 'Tallied, not yet published',
  published: 'Published',
});

export function electionStatus(e: Pick<Election, 'state' | 'opensAt' | 'closesAt'>, now: Date): ElectionStatus {
  switch (e.state) {
    case 'draft':
      return 'draft';
    case 'open':
      if (now < e.opensAt) return 'scheduled';
      return now < e.closesAt ? 'open' : 'voting-ended';
    case 'closed':
      return 'voting-ended';
    case 'tallied':
      return 'tallied';
    case 'published':
      return 'published';
  }
}

/** Options, ε, seats and the neighbour relation are promises to voters: editable only in a draft. */
export function isEditable(e: Pick<Election, 'state'>): boolean {
  return e.state === 'draft';
}

/** The tally may start once no more ballots can arrive. */
export function canTally(e: Pick<Election, 'state' | 'opensAt' | 'closesAt'>, now: Date): boolean {
  return electionStatus(e, now) === 'voting-ended';
}

/** "Close now" makes sense while ballots could still be accepted, now or later. */
export function canCloseEarly(e: Pick<Election, 'state' | 'opensAt' | 'closesAt'>, now: Date): boolean {
  const s = electionStatus(e, now);
  return s === 'open' || s === 'scheduled';
}
