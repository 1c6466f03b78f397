import type { Db } from '../db/knex.ts';
import { toCount } from '../db/knex.ts';
import type { MailingKind } from './mailText.ts';

/**
 * Mailings to a roster, their deliveries and the pending code hashes (migration 20261203160000).
 * A delivery row names a member and a state, never a code or a hash; pending_codes holds hashes
 * and names nobody.
 */
export type DeliveryState = 'queued' | 'sending' | 'sent' | 'failed';

export interface Mailing {
  id: string;
  electionId: string;
  kind: MailingKind;
  hoursBefore: number | null;
  state: 'scheduled' | 'started' | 'cancelled';
  createdAt: Date;
  startedAt: Date | null;
}

const mailing = (r: Record<string, unknown>): Mailing => ({
  id: r.id as string,
  electionId: r.election_id as string,
  kind: r.kind as MailingKind,
  hoursBefore: (r.hours_before as number | null) ?? null,
  state: r.state as Mailing['state'],
  createdAt: new Date(r.created_at as string),
  startedAt: r.started_at ? new Date(r.started_at as string) : null,
});

export async function insertMailing(
  db: Db,
  row: { id: string; electionId: string; kind: MailingKind; hoursBefore: number | null; state: Mailing['state']; at: Date },
): Promise<void> {
  await db('mailings').insert({
    id: row.id,
    election_id: row.electionId,
    kind: row.kind,
    hours_before: row.hoursBefore,
    state: row.state,
    created_at: row.at,
    started_at: row.state === 'started' ? row.at : null,
  });
}

/** Queues one delivery per member of the election's roster, as it is now (fixed while the election is open). */
export async function queueRoster(db: Db, mailingId: string, rosterId: string): Promise<void> {
  await db.raw(
    `INSERT INTO mail_deliveries (mailing_id, member_id, state)
     SELECT CAST(? AS uuid), m.id, 'queued' FROM roster_members m WHERE m.roster_id = ?`,
    [mailingId, rosterId],
  );
}

export async function startMailing(db: Db, mailingId: string, at: Date): Promise<void> {
  await db('mailings').where({ id: mailingId }).update({ state: 'started', started_at: at });
}

export async function cancelMailing(db: Db, mailingId: string): Promise<boolean> {
  // Counts come from RETURNING: the embedded engine's driver answers a bare UPDATE with no count.
  return (await db('mailings').where({ id: mailingId, state: 'scheduled' }).update({ state: 'cancelled' }).returning('id')).length > 0;
}

export async function listMailings(db: Db, electionId: string): Promise<Mailing[]> {
  const rows = await db('mailings')
    .where({ election_id: electionId })
    .orderBy([{ column: 'created_at' }, { column: 'id' }]);
  return rows.map(mailing);
}

/** Scheduled notices of elections that still have a roster, with what decides when they are due. */
export async function scheduledNotices(
  db: Db,
): Promise<(Mailing & { electionState: string; opensAt: Date; closesAt: Date; publishedAt: Date | null; rosterId: string | null })[]> {
  const rows = await db('mailings as g')
    .join('elections as e', 'e.id', 'g.election_id')
    .where('g.state', 'scheduled')
    .select('g.*', 'e.state as election_state', 'e.opens_at', 'e.closes_at', 'e.published_at', 'e.roster_id');
  return rows.map((r) => ({
    ...mailing(r),
    electionState: r.election_state,
    opensAt: new Date(r.opens_at),
    closesAt: new Date(r.closes_at),
    publishedAt: r.published_at ? new Date(r.published_at) : null,
    rosterId: r.roster_id ?? null,
  }));
}

/** Counts per state of one mailing's deliveries. */
export async function deliveryCounts(db: Db, mailingId: string): Promise<Record<DeliveryState, number>> {
  const rows = await db('mail_deliveries').where({ mailing_id: mailingId }).groupBy('state').select('state', db.raw('count(*) as n'));
  const out: Record<DeliveryState, number> = { queued: 0, sending: 0, sent: 0, failed: 0 };
  for (const r of rows) out[r.state as DeliveryState] = toCount(r.n);
  return out;
}

/** Every delivery of a mailing, by address: for the roster's organisers only. */
export async function listDeliveries(db: Db, mailingId: string): Promise<{ email: string; state: DeliveryState; answer: string | null }[]> {
  const rows = await db('mail_deliveries as d')
    .join('roster_members as m', 'm.id', 'd.member_id')
    .where('d.mailing_id', mailingId)
    .orderBy('m.email_canonical')
    .select('m.email', 'd.state', 'd.answer');
  return rows.map((r) => ({ email: r.email, state: r.state, answer: r.answer ?? null }));
}

export interface Recipient {
  memberId: string;
  email: string;
  displayName: string | null;
}

/** A started mailing with queued deliveries, oldest first, with its election. */
export async function nextStartedMailing(db: Db): Promise<(Mailing & { rosterId: string | null }) | null> {
  const r = await db('mailings as g')
    .join('elections as e', 'e.id', 'g.election_id')
    .where('g.state', 'started')
    .whereExists(db('mail_deliveries as d').whereRaw('d.mailing_id = g.id').where('d.state', 'queued'))
    .orderBy([{ column: 'g.started_at' }, { column: 'g.id' }])
    .first('g.*', 'e.roster_id');
  return r ? { ...mailing(r), rosterId: r.roster_id ?? null } : null;
}

/** Takes up to `n` queued deliveries of a mailing into the sender's hands (state 'sending'). */
export async function claimDeliveries(db: Db, mailingId: string, n: number): Promise<Recipient[]> {
  const ids = db('mail_deliveries').where({ mailing_id: mailingId, state: 'queued' }).limit(n).select('member_id');
  const claimed = await db('mail_deliveries')
    .where({ mailing_id: mailingId, state: 'queued' })
    .whereIn('member_id', ids)
    .update({ state: 'sending', answer: null })
    .returning('member_id');
  const memberIds = claimed.map((r: { member_id: string }) => r.member_id);
  if (memberIds.length === 0) return [];
  const rows = await db('roster_members').whereIn('id', memberIds).select('id', 'email', 'display_name');
  return rows.map((r) => ({ memberId: r.id, email: r.email, displayName: r.display_name ?? null }));
}

export async function markDeliveries(
  db: Db,
  mailingId: string,
  memberIds: readonly string[],
  state: DeliveryState,
  answer: string | null = null,
): Promise<void> {
  for (let i = 0; i < memberIds.length; i += 1000) {
    await db('mail_deliveries')
      .where({ mailing_id: mailingId })
      .whereIn('member_id', memberIds.slice(i, i + 1000))
      .update({ state, answer });
  }
}

/** Failures of one mailing go back to the queue (the organiser's "send again"). */
export async function requeueFailed(db: Db, mailingId: string): Promise<number> {
  return (
    await db('mail_deliveries').where({ mailing_id: mailingId, state: 'failed' }).update({ state: 'queued', answer: null }).returning('member_id')
  ).length;
}

/**
 * After a sender died: every delivery it had in hand is queued again, and every pending hash is
 * deleted, so the code in any message it may have handed over never works. Called only by the one
 * sender (under the mail lock) at the start of its round, so nothing pending is still in flight.
 */
export async function withdrawPending(db: Db): Promise<{ deliveries: number; codes: number }> {
  const codes = (await db('pending_codes').delete().returning('election_id')).length;
  const deliveries = (await db('mail_deliveries').where({ state: 'sending' }).update({ state: 'queued' }).returning('member_id')).length;
  return { deliveries, codes };
}

export async function insertPendingHashes(db: Db, electionId: string, hashes: readonly Buffer[]): Promise<void> {
  for (let i = 0; i < hashes.length; i += 1000) {
    await db('pending_codes').insert(hashes.slice(i, i + 1000).map((code_hash) => ({ election_id: electionId, code_hash })));
  }
}

/** Moves accepted hashes from pending to spendable (ballot_codes) and deletes the rest. */
export async function settlePending(db: Db, electionId: string, accepted: readonly Buffer[], refused: readonly Buffer[]): Promise<void> {
  const all = [...accepted, ...refused];
  for (let i = 0; i < all.length; i += 1000) {
    await db('pending_codes')
      .where({ election_id: electionId })
      .whereIn('code_hash', all.slice(i, i + 1000))
      .delete();
  }
  for (let i = 0; i < accepted.length; i += 1000) {
    await db('ballot_codes').insert(accepted.slice(i, i + 1000).map((code_hash) => ({ election_id: electionId, code_hash })));
  }
}
