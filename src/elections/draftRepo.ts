import type { Db } from '../db/knex.ts';
import { DEFAULT_DRAW_RULE } from '../mechanism/index.ts';
import type { DraftInput } from './draft.ts';
import { DEFAULT_GROUP_NAME, groupIdFor } from './ledgerRepo.ts';

/** Column values of the draft settings; options are written separately, by position. */
function draftColumns(d: DraftInput) {
  return {
    title: d.title,
    description: d.description,
    contact: d.contact ?? '',
    seats: d.seats,
    epsilon: d.epsilon,
    neighbour: d.neighbour,
    draw_rule: d.rule ?? DEFAULT_DRAW_RULE,
    opens_at: d.opensAt,
    closes_at: d.closesAt,
    time_zone: d.timeZone,
    publish_turnout: d.publishTurnout,
    retention_days: d.retentionDays,
    expected_voters: d.expectedVoters,
    ...(d.quorum === undefined ? {} : { quorum: d.quorum }),
    ...(d.liveTurnout === undefined
      ? {}
      : { live_turnout_epsilon: d.liveTurnout?.epsilon ?? null, live_turnout_interval_hours: d.liveTurnout?.intervalHours ?? null }),
  };
}

export async function insertDraft(
  db: Db,
  row: { id: string; ownerId: string; draft: DraftInput; publicKey: Buffer; wrappedKey: unknown; at: Date },
): Promise<void> {
  await db('elections').insert({
    id: row.id,
    owner_id: row.ownerId,
    state: 'draft',
    ...draftColumns(row.draft),
    roster_id: row.draft.rosterId ?? null,
    group_id: await groupIdFor(db, row.ownerId, row.draft.memberGroup ?? DEFAULT_GROUP_NAME, row.at),
    public_key: row.publicKey,
    wrapped_key: JSON.stringify(row.wrappedKey),
    created_at: row.at,
    updated_at: row.at,
  });
  await writeOptions(db, row.id, row.draft.options);
}

/** ownerId: the election's owner, whose group the draft names (a shared organiser edits the owner's). */
export async function updateDraftRow(db: Db, id: string, ownerId: string, draft: DraftInput, at: Date): Promise<void> {
  const group = draft.memberGroup === undefined ? {} : { group_id: await groupIdFor(db, ownerId, draft.memberGroup, at) };
  const electorate = draft.rosterId === undefined ? {} : { roster_id: draft.rosterId };
  await db('elections')
    .where({ id, state: 'draft' })
    .update({ ...draftColumns(draft), ...group, ...electorate, updated_at: at });
  await db('options').where({ election_id: id }).delete();
  await writeOptions(db, id, draft.options);
}

/** Positions are 0..d−1 in the order given: the bit index of each option in every ballot. */
async function writeOptions(db: Db, id: string, options: DraftInput['options']): Promise<void> {
  await db('options').insert(options.map((o, position) => ({ election_id: id, position, label: o.label, description: o.description })));
}

export interface ElectionSummary {
  id: string;
  title: string;
  state: string;
  opensAt: Date;
  closesAt: Date;
  openedAt: Date | null;
  closedAt: Date | null;
  timeZone: string;
  createdAt: Date;
  tallyStartedAt: Date | null;
  tallyHeartbeatAt: Date | null;
  resultVisibleAt: Date | null;
}

/** The organiser's own elections and those shared with them (shared: true), newest first. */
export async function listOwnElections(db: Db, ownerId: string): Promise<(ElectionSummary & { shared: boolean })[]> {
  const rows = await db('elections')
    .where({ owner_id: ownerId })
    .orWhereIn('id', db('election_organisers').where({ organiser_id: ownerId }).select('election_id'))
    .orderBy([{ column: 'created_at', order: 'desc' }, { column: 'id' }])
    .select(
      'id',
      'owner_id',
      'title',
      'state',
      'opens_at',
      'closes_at',
      'opened_at',
      'closed_at',
      'time_zone',
      'created_at',
      'tally_started_at',
      'tally_heartbeat_at',
      'result_visible_at',
    );
  return rows.map((r) => ({
    id: r.id,
    title: r.title,
    state: r.state,
    opensAt: new Date(r.opens_at),
    closesAt: new Date(r.closes_at),
    openedAt: r.opened_at ? new Date(r.opened_at) : null,
    closedAt: r.closed_at ? new Date(r.closed_at) : null,
    timeZone: r.time_zone,
    createdAt: new Date(r.created_at),
    shared: r.owner_id !== ownerId,
    tallyStartedAt: r.tally_started_at ? new Date(r.tally_started_at) : null,
    tallyHeartbeatAt: r.tally_heartbeat_at ? new Date(r.tally_heartbeat_at) : null,
    resultVisibleAt: r.result_visible_at ? new Date(r.result_visible_at) : null,
  }));
}
