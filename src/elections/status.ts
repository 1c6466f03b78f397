import type { Election } from './electionRepo.ts';

/**
 * What the organiser sees, derived from the stored state and the clock:
 * an 'open' election is "scheduled" before its opening time and "voting ended" after its closing time,
 * because casting follows acceptsBallotsAt, not a background job.
 */
export type ElectionStatus = 'draft' | 'scheduled' | 'open' | 'voting-ended' | 'drawing' | 'tallied' | 'published';

/**
 * A running tally refreshes its claim's heartbeat every few seconds (tallyClaim.ts); a claim whose
 * heartbeat is older than this is abandoned and the election is simply closed again (nothing was
 * drawn: the draw commits with the result). A claim whose process is known to have gone (embedded
 * database, or the same host) is abandoned at once, without waiting for this (claimHeld).
 */
export const HEARTBEAT_STALE_MS = 30_000;

type StatusFields = Pick<Election, 'state' | 'opensAt' | 'closesAt'> &
  Partial<Pick<Election, 'tallyStartedAt' | 'tallyHeartbeatAt' | 'resultVisibleAt'>>;

/** A tally claimed whose heartbeat is fresh (a claim from before heartbeats counts from its start). */
export function tallyInProgress(e: Partial<Pick<Election, 'state' | 'tallyStartedAt' | 'tallyHeartbeatAt'>>, now: Date): boolean {
  const last = e.tallyHeartbeatAt ?? e.tallyStartedAt;
  return (
    (e.state === 'closed' || e.state === 'open') && e.tallyStartedAt != null && last != null && now.getTime() - last.getTime() < HEARTBEAT_STALE_MS
  );
}

/** Drawn, but shown to nobody before its whole minute, so the count's duration shows nowhere. */
export function resultHidden(e: Partial<Pick<Election, 'state' | 'resultVisibleAt'>>, now: Date): boolean {
  return e.state === 'tallied' && e.resultVisibleAt != null && now < e.resultVisibleAt;
}

export const STATUS_LABELS: Readonly<Record<ElectionStatus, string>> = Object.freeze({
  draft: 'Draft',
  scheduled: 'Scheduled',
  open: 'Open for voting',
  'voting-ended': 'Voting ended',
  drawing: 'Drawing the result',
  tallied: 'Tallied, not yet published',
  published: 'Published',
});

export function electionStatus(e: StatusFields, now: Date): ElectionStatus {
  if (tallyInProgress(e, now) || resultHidden(e, now)) return 'drawing';
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
export function canTally(e: StatusFields, now: Date): boolean {
  return electionStatus(e, now) === 'voting-ended';
}

/** "Close now" makes sense while ballots could still be accepted, now or later. */
export function canCloseEarly(e: StatusFields, now: Date): boolean {
  const s = electionStatus(e, now);
  return s === 'open' || s === 'scheduled';
}
