import crypto from 'node:crypto';
import { isUuid } from '../custody/ids.ts';
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
  if (!isUuid(id)) return null;
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
  row: { groupId: string | null; electionId: string; at: Date; howVoted: string; whetherVoted: string; unprotected: readonly UnprotectedRelease[] },
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

/**
 * The electorate a roster election's draw is charged to, fixed at opening: the keyed hashes of its
 * members' addresses (ledger_electorates, migration 20261203170000). Never an address.
 */
export async function insertElectorate(db: Db, electionId: string, hashes: readonly Buffer[]): Promise<void> {
  const rows = hashes.map((h) => ({ election_id: electionId, member_hash: h }));
  // Batches keep every statement well under PostgreSQL's 65,535 bind parameters.
  for (let i = 0; i < rows.length; i += 1000) await db('ledger_electorates').insert(rows.slice(i, i + 1000));
}

export async function countElectorate(db: Db, electionId: string): Promise<number> {
  const row = await db('ledger_electorates').where({ election_id: electionId }).first(db.raw('count(*) as n'));
  return Number(row?.n ?? 0);
}

/**
 * For each member of this election's electorate (hash in hex), every election whose electorate
 * holds them, this one included, and whether they held a second code there: a replacement granted
 * (replacement_grants, before the draw) or recorded by the draw (ledger_second_codes).
 */
export async function electionsOfMembers(db: Db, electionId: string): Promise<{ member: string; electionId: string; secondCode: boolean }[]> {
  const rows = await db('ledger_electorates as me')
    .join('ledger_electorates as o', 'o.member_hash', 'me.member_hash')
    .where('me.election_id', electionId)
    .select(
      db.raw("encode(o.member_hash, 'hex') as member"),
      'o.election_id',
      db.raw(
        `(EXISTS (SELECT 1 FROM ledger_second_codes s WHERE s.election_id = o.election_id AND s.member_hash = o.member_hash)
          OR EXISTS (SELECT 1 FROM replacement_grants g WHERE g.election_id = o.election_id AND g.member_hash = o.member_hash)) as second_code`,
      ),
    );
  return rows.map((r) => ({ member: r.member as string, electionId: r.election_id as string, secondCode: r.second_code === true }));
}

export interface ElectorateElection {
  id: string;
  state: string;
  epsilon: string;
  neighbour: 'replace-one' | 'add-remove';
  /** The draw's charge, or null while the election is not drawn. */
  charge: LedgerEntry | null;
  /** Set in one member's history (ledger.ts): they held a second code here, so count it twice. */
  secondCode?: true;
}

/** The elections with these ids, each with its ledger charge if drawn. */
export async function electionsWithCharges(db: Db, ids: readonly string[]): Promise<ElectorateElection[]> {
  const out: ElectorateElection[] = [];
  for (let i = 0; i < ids.length; i += 1000) {
    const rows = await db('elections as e')
      .leftJoin('privacy_ledger as l', 'l.election_id', 'e.id')
      .whereIn('e.id', ids.slice(i, i + 1000))
      .select('e.id', 'e.state', 'e.epsilon', 'e.neighbour', 'l.charged_at', 'l.how_voted_epsilon', 'l.whether_voted_epsilon', 'l.unprotected');
    for (const r of rows) {
      out.push({
        id: r.id,
        state: r.state,
        epsilon: r.epsilon,
        neighbour: r.neighbour,
        charge:
          r.charged_at == null
            ? null
            : {
                chargedAt: new Date(r.charged_at),
                howVotedEpsilon: r.how_voted_epsilon,
                whetherVotedEpsilon: r.whether_voted_epsilon,
                unprotected: json(r.unprotected) as UnprotectedRelease[],
              },
      });
    }
  }
  return out;
}

/** Serialises the openings of roster elections instance-wide, so two cannot both squeeze a member under the budget. */
export async function lockMemberLedger(db: Db): Promise<void> {
  await db.raw("SELECT pg_advisory_xact_lock(hashtext('veiltally/member-ledger'))");
}
