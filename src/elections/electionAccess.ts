import type { Db } from '../db/knex.ts';
import { isUuid } from '../custody/ids.ts';
import { toBuffer } from '../db/knex.ts';
import { acceptsBallotsAt, findElection, lockElection, type Election, type ElectionState } from './electionRepo.ts';
import { ElectionNotFound, ElectionNotOpen, TallyKeyMissing, type NotOpenReason } from './errors.ts';

/**
 * An election this organiser runs (their own, or one shared with them), optionally locked for
 * the transaction. Anyone else's election answers exactly like a missing one, so ids cannot be probed.
 */
export async function ownedElection(db: Db, electionId: string, organiserId: string | null, options: { lock: boolean }): Promise<Election> {
  const e = options.lock ? await lockElection(db, electionId) : await findElection(db, electionId);
  if (!e) throw new ElectionNotFound();
  if (organiserId !== null && e.ownerId !== organiserId && !(await isSharedWith(db, e.id, organiserId))) throw new ElectionNotFound();
  return e;
}

/** Has the election been shared with this organiser (election_organisers)? */
export async function isSharedWith(db: Db, electionId: string, organiserId: string): Promise<boolean> {
  if (!isUuid(organiserId)) return false;
  return Boolean(await db('election_organisers').where({ election_id: electionId, organiser_id: organiserId }).first('organiser_id'));
}

export interface VotingElection {
  id: string;
  publicKey: Buffer;
  optionCount: number;
  /** Its ballots are stored under the shred layer (its wrapped key is; custody/shredLayer.ts). */
  shredLayered: boolean;
}

/**
 * The election a member is voting in, checked open at `now` (acceptsBallotsAt's rule).
 * FOR SHARE: casts do not block each other, but a tally (FOR UPDATE on the same row)
 * waits for casts in flight and casts wait for the tally, so no ballot lands mid-count.
 */
export async function votingElection(db: Db, electionId: string, now: Date): Promise<VotingElection> {
  if (!isUuid(electionId)) throw new ElectionNotFound();
  // d comes in the same statement: one round trip fewer on every cast (README, Performance).
  const row = await db('elections')
    .where({ id: electionId })
    .forShare()
    .first(
      'id',
      'state',
      'opens_at',
      'closes_at',
      'public_key',
      db.raw('(select count(*) from options o where o.election_id = elections.id) as option_count'),
      db.raw('(select max(position) from options o where o.election_id = elections.id) as option_top'),
      db.raw("(wrapped_key->>'version') as key_version"),
    );
  if (!row) throw new ElectionNotFound();
  const state = row.state as ElectionState;
  const opensAt = new Date(row.opens_at);
  const closesAt = new Date(row.closes_at);
  if (!acceptsBallotsAt({ state, opensAt, closesAt }, now)) throw new ElectionNotOpen(notOpenReason(state, opensAt, now));
  if (row.public_key == null) throw new TallyKeyMissing();
  return {
    id: electionId,
    publicKey: toBuffer(row.public_key),
    optionCount: checkedOptionCount(row.option_count, row.option_top),
    shredLayered: String(row.key_version) === '2',
  };
}

function notOpenReason(state: ElectionState, opensAt: Date, now: Date): NotOpenReason {
  if (state === 'draft') return 'draft';
  if (state === 'open' && now < opensAt) return 'not-yet-open';
  return 'closed';
}

/** d, the number of options; positions are 0..d-1, the bit index in every ballot. */
export async function optionCount(db: Db, electionId: string): Promise<number> {
  const row = await db('options').where({ election_id: electionId }).first(db.raw('count(*) as n'), db.raw('max(position) as top'));
  return checkedOptionCount(row?.n, row?.top);
}

function checkedOptionCount(count: unknown, top: unknown): number {
  const n = Number(count ?? 0);
  if (n > 0 && Number(top) !== n - 1) throw new Error('option positions are not 0..d-1');
  return n;
}
