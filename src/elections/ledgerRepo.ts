import crypto from 'node:crypto';
import type { Db } from '../db/knex.ts';
import type { LedgerEntry, UnprotectedRelease } from '../mechanism/index.ts';

/**
 * Member groups and the privacy ledger. Ledger rows are only ever inserted: the database
 * refuses UPDATE and DELETE on them (migration 20261202120000), so a charge is never undone.
 */
export const DEFAULT_GROUP_NAME = 'Members';
export const GROUP_NAME_MAX = 120;

export interface MemberGroup {
  id: string;
  name: string;
}

/** Names are compared trimmed, NFC-normalised and case-insensitively. */
export const groupKey = (name: string): string => name.trim().normalize('NFC').toLocaleLowerCase('en');

/**
 * The organiser's group with this name, created on first use. Groups belong to one organiser
 * (migration 20261203160000): the same name typed by two organisers is two groups and two budgets.
 */
export async function groupIdFor(db: Db, ownerId: string, name: string, at: Date): Promise<string> {
  const key = groupKey(name);
  await db('member_groups')
    .insert({ id: crypto.randomUUID(), owner_id: ownerId, name: name.trim(), name_key: key, created_at: at })
    .onConflict(['owner_id', 'name_key'])
    .ignore();
  const row = await db('member_groups').where({ owner_id: ownerId, name_key: key }).first('id');
  return row.id as string;
}

export async function findGroup(db: Db, id: string): Promise<MemberGroup | null> {
  if (!/^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i.test(id)) return null;
  const row = await db('member_groups').where({ id }).first('id', 'name');
  return row ? { id: row.id, name: row.name } : null;
}

export async function findGroupByName(db: Db, ownerId: string, name: string): Promise<MemberGroup | null> {
  const row = await db('member_groups')
    .where({ owner_id: ownerId, name_key: groupKey(name) })
    .first('id', 'name');
  return row ? { id: row.id, name: row.name } : null;
}

export interface LedgerRow extends LedgerEntry {
  electionId: string;
  electionTitle: string;
  published: boolean;
  kind: 'draw';
}

const json = (v: unknown): unknown => (typeof v === 'string' ? JSON.parse(v) : v);

/** Every charge to a group, oldest first, with the election's title and whether its result is public. */
export async function listLedger(db: Db, groupId: string): Promise<LedgerRow[]> {
  const rows = await db('privacy_ledger as l')
    .join('elections as e', 'e.id', 'l.election_id')
    .where('l.group_id', groupId)
    .orderBy('l.id')
    .select('l.kind', 'l.election_id', 'l.charged_at', 'l.how_voted_epsilon', 'l.whether_voted_epsilon', 'l.unprotected', 'e.title', 'e.state');
  return rows.map((r) => ({
    kind: r.kind,
    electionId: r.election_id,
    electionTitle: r.title,
    published: r.state === 'published',
    chargedAt: new Date(r.charged_at),
    howVotedEpsilon: r.how_voted_epsilon,
    whetherVotedEpsilon: r.whether_voted_epsilon,
    unprotected: json(r.unprotected) as UnprotectedRelease[],
  }));
}

export async function chargeDraw(
  db: Db,
  row: { groupId: string; electionId: string; at: Date; howVoted: string; whetherVoted: string; unprotected: readonly UnprotectedRelease[] },
): Promise<void> {
  await db('privacy_ledger').insert({
    group_id: row.groupId,
    election_id: row.electionId,
    kind: 'draw',
    charged_at: row.at,
    how_voted_epsilon: row.howVoted,
    whether_voted_epsilon: row.whetherVoted,
    unprotected: JSON.stringify(row.unprotected),
  });
}

/** Who owns an election (and so its group), or null when there is no such election. */
export async function electionOwner(db: Db, electionId: string): Promise<string | null> {
  const row = await db('elections').where({ id: electionId }).first('owner_id');
  return (row?.owner_id as string | undefined) ?? null;
}

/** Elections of the group that are open or closed but not yet drawn: each will be charged at its draw. */
export async function pendingDraws(
  db: Db,
  groupId: string,
  exceptElectionId?: string,
): Promise<{ epsilon: string; neighbour: string; seats: number }[]> {
  const q = db('elections').where({ group_id: groupId }).whereIn('state', ['open', 'closed']);
  if (exceptElectionId) q.whereNot({ id: exceptElectionId });
  return q.select('epsilon', 'neighbour', 'seats');
}
