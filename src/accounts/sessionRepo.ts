import crypto from 'node:crypto';
import type { Db } from '../db/knex.ts';

/** Session rows are keyed by SHA-256 of the session id, so the table holds no usable session. */
const key = (sid: string): string => crypto.createHash('sha256').update(sid).digest('hex');

export async function readSession(db: Db, sid: string, now: Date): Promise<unknown | null> {
  return (await readSessionRow(db, sid, now))?.data ?? null;
}

/** The session's data and when its row expires, or null when there is none or it has expired. */
export async function readSessionRow(db: Db, sid: string, now: Date): Promise<{ data: unknown; expiresAt: Date } | null> {
  const row = await db('sessions')
    .where({ sid_hash: key(sid) })
    .andWhere('expires_at', '>', now)
    .first('data', 'expires_at');
  if (!row) return null;
  return { data: typeof row.data === 'string' ? JSON.parse(row.data) : row.data, expiresAt: new Date(row.expires_at) };
}

export async function writeSession(db: Db, sid: string, data: unknown, expiresAt: Date): Promise<void> {
  await db('sessions')
    .insert({ sid_hash: key(sid), data: JSON.stringify(data), expires_at: expiresAt })
    .onConflict('sid_hash')
    .merge(['data', 'expires_at']);
}

export async function touchSession(db: Db, sid: string, expiresAt: Date): Promise<void> {
  await db('sessions')
    .where({ sid_hash: key(sid) })
    .update({ expires_at: expiresAt });
}

export async function deleteSession(db: Db, sid: string): Promise<void> {
  await db('sessions')
    .where({ sid_hash: key(sid) })
    .delete();
}

export async function deleteExpiredSessions(db: Db, now: Date): Promise<number> {
  return db('sessions').where('expires_at', '<=', now).delete();
}

/**
 * Ends every session of one organiser (after a password change or reset, or removal), except
 * the one given by its session id. Sessions store the organiser id in their data.
 */
export async function deleteSessionsOf(db: Db, organiserId: string, exceptSid?: string): Promise<number> {
  const q = db('sessions').whereRaw("data->>'organiserId' = ?", [organiserId]);
  if (exceptSid) q.andWhereNot({ sid_hash: key(exceptSid) });
  return q.delete();
}
