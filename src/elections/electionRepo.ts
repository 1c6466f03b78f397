import type { Db } from '../db/knex.ts';
import { isUuid } from '../custody/ids.ts';
import { toBuffer } from '../db/knex.ts';
import { drawRuleOr, type DrawRule } from '../mechanism/index.ts';

export type ElectionState = 'draft' | 'open' | 'closed' | 'tallied' | 'published';
export type Neighbour = 'replace-one' | 'add-remove';

export interface ElectionOption {
  position: number;
  label: string;
  description: string;
}

/** An election as the use-cases see it. Wrapped key and result are opaque JSON here. */
export interface Election {
  id: string;
  ownerId: string;
  title: string;
  description: string;
  /** How members reach the organiser (free text, may be empty). */
  contact: string;
  state: ElectionState;
  seats: number;
  epsilon: string;
  neighbour: Neighbour;
  rule: DrawRule;
  opensAt: Date;
  closesAt: Date;
  timeZone: string;
  publishTurnout: boolean;
  retentionDays: number | null;
  expectedVoters: number | null;
  /** The opt-in live turnout (src/elections/liveTurnout.ts): its own ε and release interval; null when off. */
  liveTurnout: { epsilon: string; intervalHours: number } | null;
  /** A bylaw quorum: the least number of ballots; null when none was set. The result says exactly whether it was met. */
  quorum: number | null;
  publicKey: Buffer | null;
  wrappedKey: unknown;
  result: unknown;
  ballotsCounted: number | null;
  openedAt: Date | null;
  closedAt: Date | null;
  talliedAt: Date | null;
  publishedAt: Date | null;
  shredAfter: Date | null;
  shreddedAt: Date | null;
  /** A queued tally (closeAndTally.ts): when it was claimed, and its claim. */
  tallyStartedAt: Date | null;
  tallyClaim: string | null;
  /** Who holds the claim (tallyClaim.ts) and its last heartbeat: abandoned once that process has gone. */
  tallyHeartbeatAt: Date | null;
  tallyBootId: string | null;
  tallyPid: number | null;
  tallyHost: string | null;
  /** Error code of the last queued tally that stopped without a draw. */
  tallyFailure: string | null;
  /** The whole minute from which the drawn result may be shown (to the organiser first). */
  resultVisibleAt: Date | null;
  /** The preview ends here: the housekeeping job publishes the result. */
  publishDueAt: Date | null;
  createdAt: Date;
  /** The member group whose privacy ledger this election's draw is charged to. */
  groupId: string | null;
  /** The electorate: a roster (the app mails each member a code), or null for printed codes. */
  rosterId: string | null;
  options: ElectionOption[];
}

const json = (v: unknown): unknown => (typeof v === 'string' ? JSON.parse(v) : v);
const date = (v: unknown): Date | null => (v === null || v === undefined ? null : new Date(v as string));

function fromRow(r: Record<string, unknown>, options: ElectionOption[]): Election {
  return {
    id: r.id as string,
    ownerId: r.owner_id as string,
    title: r.title as string,
    description: r.description as string,
    contact: (r.contact as string | undefined) ?? '',
    state: r.state as ElectionState,
    seats: r.seats as number,
    epsilon: r.epsilon as string,
    neighbour: r.neighbour as Neighbour,
    rule: drawRuleOr(r.draw_rule),
    opensAt: new Date(r.opens_at as string),
    closesAt: new Date(r.closes_at as string),
    timeZone: r.time_zone as string,
    publishTurnout: r.publish_turnout as boolean,
    retentionDays: (r.retention_days as number | null) ?? null,
    expectedVoters: (r.expected_voters as number | null) ?? null,
    liveTurnout:
      r.live_turnout_epsilon == null ? null : { epsilon: String(r.live_turnout_epsilon), intervalHours: Number(r.live_turnout_interval_hours) },
    quorum: r.quorum == null ? null : Number(r.quorum),
    publicKey: r.public_key == null ? null : toBuffer(r.public_key),
    wrappedKey: r.wrapped_key == null ? null : json(r.wrapped_key),
    result: r.result == null ? null : json(r.result),
    ballotsCounted: (r.ballots_counted as number | null) ?? null,
    openedAt: date(r.opened_at),
    closedAt: date(r.closed_at),
    talliedAt: date(r.tallied_at),
    publishedAt: date(r.published_at),
    shredAfter: date(r.shred_after),
    shreddedAt: date(r.shredded_at),
    tallyStartedAt: date(r.tally_started_at),
    tallyClaim: (r.tally_claim as string | null) ?? null,
    tallyHeartbeatAt: date(r.tally_heartbeat_at),
    tallyBootId: (r.tally_boot_id as string | null | undefined) ?? null,
    tallyPid: (r.tally_pid as number | null | undefined) ?? null,
    tallyHost: (r.tally_host as string | null | undefined) ?? null,
    tallyFailure: (r.tally_failure as string | null) ?? null,
    resultVisibleAt: date(r.result_visible_at),
    publishDueAt: date(r.publish_due_at),
    createdAt: new Date(r.created_at as string),
    groupId: (r.group_id as string | null | undefined) ?? null,
    rosterId: (r.roster_id as string | null | undefined) ?? null,
    options,
  };
}

async function loadOptions(db: Db, electionId: string): Promise<ElectionOption[]> {
  const rows = await db('options').where({ election_id: electionId }).orderBy('position');
  return rows.map((o) => ({ position: o.position, label: o.label, description: o.description }));
}

/** Finds an election by id; a malformed id is simply not found. */
export async function findElection(db: Db, id: string): Promise<Election | null> {
  if (!isUuid(id)) return null;
  // The options come in the same statement: every member page starts here, so one round trip
  // fewer on each (README, Performance).
  const row = await db('elections')
    .where({ id })
    .first(
      'elections.*',
      db.raw(
        `(select coalesce(json_agg(json_build_object('position', o.position, 'label', o.label, 'description', o.description) order by o.position), '[]'::json)
          from options o where o.election_id = elections.id) as options_json`,
      ),
    );
  if (!row) return null;
  const options = (typeof row.options_json === 'string' ? JSON.parse(row.options_json) : row.options_json) as ElectionOption[];
  return fromRow(row, options);
}

/** Locks the election row for the rest of the transaction (serialises tally, open, close, publish). */
export async function lockElection(trx: Db, id: string): Promise<Election | null> {
  if (!isUuid(id)) return null;
  const row = await trx('elections').where({ id }).forUpdate().first();
  return row ? fromRow(row, await loadOptions(trx, id)) : null;
}

/** Is casting accepted at this instant? Checked on every cast, not only by a background job. */
export function acceptsBallotsAt(e: Pick<Election, 'state' | 'opensAt' | 'closesAt'>, now: Date): boolean {
  return e.state === 'open' && now >= e.opensAt && now < e.closesAt;
}
