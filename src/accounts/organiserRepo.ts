import type { Db } from '../db/knex.ts';
import { isUuid } from '../custody/ids.ts';
import { toCount } from '../db/knex.ts';

export interface Organiser {
  id: string;
  email: string;
  createdAt: Date;
  createdByEmail: string | null;
  /** Created by the demo (`veiltally demo`): shown as a sample login everywhere it appears. */
  demo: boolean;
  /** May add and remove organiser accounts; set only from the command line (`veiltally organiser promote`). */
  admin: boolean;
}

export interface OrganiserCredentials {
  id: string;
  email: string;
  passwordHash: string;
  demo: boolean;
}

/** Emails are stored trimmed and lower-cased, so sign-in does not depend on how they were typed. */
export const normaliseEmail = (email: string): string => email.trim().toLowerCase();

export async function countOrganisers(db: Db): Promise<number> {
  const row = await db('organisers').count({ n: '*' }).first();
  return toCount(row?.n ?? 0);
}

/** Organisers other than the demo's own sample login. */
export async function countRealOrganisers(db: Db): Promise<number> {
  const row = await db('organisers').where({ demo: false }).count({ n: '*' }).first();
  return toCount(row?.n ?? 0);
}

export async function findCredentials(db: Db, email: string): Promise<OrganiserCredentials | null> {
  const row = await db('organisers')
    .where({ email: normaliseEmail(email) })
    .whereNull('removed_at')
    .first('id', 'email', 'password_hash', 'demo');
  return row ? { id: row.id, email: row.email, passwordHash: row.password_hash, demo: row.demo === true } : null;
}

export async function findOrganiser(db: Db, id: string): Promise<Organiser | null> {
  if (!isUuid(id)) return null;
  const rows = await listQuery(db).where('o.id', id);
  return rows[0] ? fromRow(rows[0]) : null;
}

export async function listOrganisers(db: Db): Promise<Organiser[]> {
  const rows = await listQuery(db).orderBy([{ column: 'o.created_at' }, { column: 'o.email' }]);
  return rows.map(fromRow);
}

/** Removed organisers (removed_at set) are kept for the record but are nobody here. */
function listQuery(db: Db) {
  return db('organisers as o')
    .whereNull('o.removed_at')
    .leftJoin('organisers as c', 'c.id', 'o.created_by')
    .select('o.id', 'o.email', 'o.created_at', 'o.demo', 'o.admin', 'c.email as created_by_email');
}

function fromRow(r: Record<string, unknown>): Organiser {
  return {
    id: r.id as string,
    email: r.email as string,
    createdAt: new Date(r.created_at as string),
    createdByEmail: (r.created_by_email as string | null) ?? null,
    demo: r.demo === true,
    admin: r.admin === true,
  };
}

/** Inserts an organiser; false when the email is taken (unique index), so races cannot create twins. */
export async function insertOrganiser(
  db: Db,
  row: { id: string; email: string; passwordHash: string; createdBy: string | null; at: Date; demo?: boolean; admin?: boolean },
): Promise<boolean> {
  const inserted = await db('organisers')
    .insert({
      id: row.id,
      email: normaliseEmail(row.email),
      password_hash: row.passwordHash,
      created_by: row.createdBy,
      created_at: row.at,
      demo: row.demo ?? false,
      admin: row.admin ?? false,
    })
    .onConflict('email')
    .ignore()
    .returning('id');
  return inserted.length === 1;
}

export async function updatePasswordHash(db: Db, id: string, passwordHash: string): Promise<void> {
  await db('organisers').where({ id }).update({ password_hash: passwordHash });
}

/** Makes an organiser an administrator or not; false when nobody current has that id. Command line only. */
export async function setAdmin(db: Db, id: string, admin: boolean): Promise<boolean> {
  if (!isUuid(id)) return false;
  return (await db('organisers').where({ id, demo: false }).whereNull('removed_at').update({ admin })) === 1;
}

/** Elections not yet published that this organiser alone runs (no other current organiser shares them). */
export async function electionsRunAlone(db: Db, organiserId: string): Promise<number> {
  const row = await db('elections as e')
    .where('e.owner_id', organiserId)
    .whereNot('e.state', 'published')
    .whereNotExists(
      db('election_organisers as s')
        .join('organisers as o', 'o.id', 's.organiser_id')
        .whereRaw('s.election_id = e.id')
        .whereNot('s.organiser_id', organiserId)
        .whereNull('o.removed_at'),
    )
    .count({ n: '*' })
    .first();
  return toCount(row?.n ?? 0);
}

/** The current (not removed) organiser with this email, compared as stored (lower case), or null. */
export async function findCurrentOrganiserByEmail(db: Db, email: string): Promise<{ id: string; email: string } | null> {
  const r = await db('organisers').where({ email }).whereNull('removed_at').first('id', 'email');
  return r ? { id: r.id as string, email: r.email as string } : null;
}

export async function markRemoved(db: Db, id: string, at: Date): Promise<void> {
  await db('organisers').where({ id }).whereNull('removed_at').update({ removed_at: at });
}
