import { isUuid } from '../custody/index.ts';
import type { Db } from '../db/knex.ts';

/**
 * Member rosters (migration 20261203150000). Queries only; the rules live in the use-cases.
 *
 * Who may see a roster: its owner and the organisers it was shared with (roster_organisers).
 * Sharing an election does not share its roster; an election's other organisers see the
 * roster's name and size, never its addresses.
 *
 * The electorate is fixed once an election opens: while an election using a roster is open or
 * waiting for its draw (state 'open' or 'closed'), the roster's members cannot be added,
 * removed or imported (rosterInUse), so the members mailed a code are exactly the members the
 * draw is charged to.
 */

/** An address compared as the roster compares them: trimmed, NFC, lower-cased. */
export const canonicalEmail = (email: string): string => email.trim().normalize('NFC').toLowerCase();

export interface Roster {
  id: string;
  ownerId: string;
  name: string;
  createdAt: Date;
}

export interface RosterMember {
  id: string;
  /** As entered (trimmed). */
  email: string;
  displayName: string | null;
}

const roster = (r: { id: string; owner_id: string; name: string; created_at: unknown }): Roster => ({
  id: r.id,
  ownerId: r.owner_id,
  name: r.name,
  createdAt: new Date(r.created_at as string),
});

export async function findRoster(db: Db, rosterId: string): Promise<Roster | null> {
  if (!isUuid(rosterId)) return null;
  const r = await db('rosters').where({ id: rosterId }).first('id', 'owner_id', 'name', 'created_at');
  return r ? roster(r) : null;
}

/** Is this organiser one of the roster's organisers (owner or shared with)? */
export async function isRosterOrganiser(db: Db, rosterId: string, organiserId: string): Promise<boolean> {
  if (!isUuid(rosterId) || !isUuid(organiserId)) return false;
  const row = await db('rosters as r')
    .where('r.id', rosterId)
    .andWhere((q) =>
      q
        .where('r.owner_id', organiserId)
        .orWhereExists(db('roster_organisers as s').whereRaw('s.roster_id = r.id').where('s.organiser_id', organiserId)),
    )
    .first('r.id');
  return Boolean(row);
}

/** The rosters this organiser may use, by name, with their sizes. */
export async function listRosters(db: Db, organiserId: string): Promise<(Roster & { members: number })[]> {
  const rows = await db('rosters as r')
    .where('r.owner_id', organiserId)
    .orWhereIn('r.id', db('roster_organisers').where({ organiser_id: organiserId }).select('roster_id'))
    .orderBy([{ column: 'r.name' }, { column: 'r.created_at' }])
    .select('r.id', 'r.owner_id', 'r.name', 'r.created_at', db.raw('(select count(*) from roster_members m where m.roster_id = r.id) as members'));
  return rows.map((r) => ({ ...roster(r), members: Number(r.members) }));
}

/** Ids come from the use-case's random source, like every other id of ours. */
export async function insertRoster(db: Db, row: { id: string; ownerId: string; name: string; at: Date }): Promise<void> {
  await db('rosters').insert({ id: row.id, owner_id: row.ownerId, name: row.name, created_at: row.at });
}

export async function renameRoster(db: Db, rosterId: string, name: string): Promise<void> {
  await db('rosters').where({ id: rosterId }).update({ name });
}

/** Deletes the roster and, by cascade, every member's address. */
export async function deleteRoster(db: Db, rosterId: string): Promise<void> {
  await db('rosters').where({ id: rosterId }).delete();
}

export async function lockRoster(db: Db, rosterId: string): Promise<Roster | null> {
  if (!isUuid(rosterId)) return null;
  const r = await db('rosters').where({ id: rosterId }).forUpdate().first('id', 'owner_id', 'name', 'created_at');
  return r ? roster(r) : null;
}

/** Every member, ordered by address. */
export async function listRosterMembers(db: Db, rosterId: string): Promise<RosterMember[]> {
  if (!isUuid(rosterId)) return [];
  const rows = await db('roster_members').where({ roster_id: rosterId }).orderBy('email_canonical').select('id', 'email', 'display_name');
  return rows.map((r) => ({ id: r.id, email: r.email, displayName: r.display_name ?? null }));
}

export async function countRosterMembers(db: Db, rosterId: string): Promise<number> {
  const row = await db('roster_members').where({ roster_id: rosterId }).first(db.raw('count(*) as n'));
  return Number(row?.n ?? 0);
}

/** The member with this address (compared canonically), or null. */
export async function findRosterMemberByEmail(db: Db, rosterId: string, email: string): Promise<RosterMember | null> {
  if (!isUuid(rosterId)) return null;
  const r = await db('roster_members')
    .where({ roster_id: rosterId, email_canonical: canonicalEmail(email) })
    .first('id', 'email', 'display_name');
  return r ? { id: r.id, email: r.email, displayName: r.display_name ?? null } : null;
}

/** The canonical addresses of the roster (for the keyed hashes of the privacy ledger). */
export async function canonicalAddresses(db: Db, rosterId: string): Promise<string[]> {
  const rows = await db('roster_members').where({ roster_id: rosterId }).select('email_canonical');
  return rows.map((r) => r.email_canonical as string);
}

export async function insertMembers(
  db: Db,
  rosterId: string,
  members: readonly { id: string; email: string; displayName: string | null }[],
): Promise<void> {
  const rows = members.map((m) => ({
    id: m.id,
    roster_id: rosterId,
    email: m.email.trim(),
    email_canonical: canonicalEmail(m.email),
    display_name: m.displayName,
  }));
  // Batches keep every statement well under PostgreSQL's 65,535 bind parameters.
  for (let i = 0; i < rows.length; i += 1000) await db('roster_members').insert(rows.slice(i, i + 1000));
}

/** Removes one member; their address is gone with the row. */
export async function deleteMember(db: Db, rosterId: string, memberId: string): Promise<boolean> {
  if (!isUuid(memberId)) return false;
  return (await db('roster_members').where({ roster_id: rosterId, id: memberId }).delete()) > 0;
}

/** The roster an election's electorate is drawn from, or null for printed codes. */
export async function rosterForElection(db: Db, electionId: string): Promise<Roster | null> {
  if (!isUuid(electionId)) return null;
  const r = await db('elections as e')
    .join('rosters as r', 'r.id', 'e.roster_id')
    .where('e.id', electionId)
    .first('r.id', 'r.owner_id', 'r.name', 'r.created_at');
  return r ? roster(r) : null;
}

/** Elections using the roster that are open or waiting for their draw: the roster's members are fixed meanwhile. */
export async function rosterInUse(db: Db, rosterId: string): Promise<{ id: string; title: string; state: string }[]> {
  return db('elections').where({ roster_id: rosterId }).whereIn('state', ['open', 'closed']).orderBy('title').select('id', 'title', 'state');
}

/** Every election that names the roster, whatever its state. */
export async function electionsUsingRoster(db: Db, rosterId: string): Promise<{ id: string; title: string; state: string }[]> {
  return db('elections').where({ roster_id: rosterId }).orderBy('title').select('id', 'title', 'state');
}
