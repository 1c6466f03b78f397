import { z } from 'zod';
import type { Db } from '../db/knex.ts';
import { recordEvent } from './audit.ts';
import { deleteBallots } from './ballotRepo.ts';
import type { UseCaseContext } from './context.ts';
import { ownedElection } from './electionAccess.ts';
import { ElectionStateConflict, ResultNotPublished } from './errors.ts';
import { removeShreddedKeyFiles } from './shredKeys.ts';

/** Retention choice: null = shred at publication (default); otherwise keep sealed 1–90 days, then shred. */
export const RETENTION_DAYS_MAX = 90;
export const retentionDaysSchema = z
  .number()
  .int()
  .min(1, 'Keep sealed ballots for at least 1 day, or choose to shred them at publication.')
  .max(RETENTION_DAYS_MAX, `Sealed ballots can be kept for at most ${RETENTION_DAYS_MAX} days.`)
  .nullable();

/**
 * Shredding (DESIGN §5, §8): deletes the wrapped election key and every ciphertext, in the
 * caller's transaction, and records when. Receipts, code hashes, the public key and the signed
 * result stay. The rows are not the only copy: dead row versions linger in the pages until the
 * table is rewritten (rewriteShreddedTables), and the write-ahead log, its archives and backups
 * keep them longer. What makes the shred final is the election's key file: both the wrapped key
 * and every ballot were stored only under it (custody/shredLayer.ts), and every caller deletes it
 * after committing (removeShreddedKeyFiles; housekeeping retries both if either failed).
 */
export async function shredInTransaction(trx: Db, electionId: string, organiserId: string | null, now: Date): Promise<void> {
  await deleteBallots(trx, electionId);
  await trx('elections').where({ id: electionId }).update({ wrapped_key: null, shredded_at: now, updated_at: now });
  await recordEvent(trx, { electionId, organiserId, action: 'shredded' }, now);
  await trx('instance_settings')
    .insert({ name: REWRITE_DUE, value: JSON.stringify(true) })
    .onConflict('name')
    .ignore();
}

const REWRITE_DUE = 'shred-rewrite-due';

/**
 * Every UPDATE of an election row leaves the old version, wrapped key included, in the page until
 * the table is rewritten; a plain VACUUM only marks the space free. VACUUM FULL writes live rows to
 * new files and drops the old ones (PostgreSQL documentation, VACUUM: "FULL ... rewrites the entire
 * contents of the table into a new disk file"), so afterwards no page of elections or ballots holds
 * the shredded key or ciphertexts. It holds an exclusive lock for the rewrite: elections is one row
 * per election and ballots only what is still sealed, so the pause is short. Runs outside any
 * transaction. The write-ahead log and older backups still hold them: see the README's threat model (Known limits).
 */
export async function rewriteShreddedTables(db: Db, waitMs = 10_000): Promise<'done' | 'deferred' | 'nothing'> {
  const due = await db('instance_settings').where({ name: REWRITE_DUE }).delete();
  if (!due) return 'nothing';
  let clear = false;
  try {
    clear = await olderSnapshotsGone(db, waitMs);
    await db.raw('VACUUM (FULL) elections, ballots');
  } finally {
    // Not clear: a transaction older than the shred could still see the old row versions, and
    // VACUUM FULL copies every version some snapshot may need. Housekeeping tries again.
    if (!clear)
      await db('instance_settings')
        .insert({ name: REWRITE_DUE, value: JSON.stringify(true) })
        .onConflict('name')
        .ignore();
  }
  return clear ? 'done' : 'deferred';
}

/**
 * Waits (bounded) until no other session of this database holds a snapshot older than now, so the
 * shredded versions are dead to everyone (PostgreSQL documentation, pg_stat_activity.backend_xmin:
 * "the current backend's xmin horizon"). 32-bit xids are compared without their epoch, which is
 * wrong only across a wraparound; then the rewrite is merely repeated. PGlite has one session.
 */
async function olderSnapshotsGone(db: Db, waitMs: number): Promise<boolean> {
  const horizon = Number((await db.raw('SELECT txid_current() % 4294967296 AS h')).rows[0].h);
  const until = Date.now() + waitMs;
  for (;;) {
    const r = await db.raw(
      `SELECT count(*) AS n FROM pg_stat_activity
        WHERE datname = current_database() AND pid <> pg_backend_pid()
          AND backend_xmin IS NOT NULL AND backend_xmin::text::bigint < ?`,
      [horizon],
    );
    if (Number(r.rows[0].n) === 0) return true;
    if (Date.now() >= until) return false;
    await new Promise((resolve) => setTimeout(resolve, 200));
  }
}

/**
 * Shreds one election now: the organiser choosing to (organiserId) or the retention job
 * (null). Only after publication: a draw that was never published could otherwise vanish and be
 * made again in a new election with the same options (a re-roll costing every member ε more).
 * Already shredded: no change.
 */
export async function shredElection(ctx: UseCaseContext, input: { electionId: string; organiserId: string | null }): Promise<void> {
  await ctx.knex.transaction(async (trx) => {
    const e = await ownedElection(trx, input.electionId, input.organiserId, { lock: true });
    if (e.shreddedAt) return;
    if (e.state === 'tallied') throw new ResultNotPublished();
    if (e.state !== 'published') {
      throw new ElectionStateConflict('Sealed ballots can only be shredded after the result is drawn and published.');
    }
    await shredInTransaction(trx, e.id, input.organiserId, ctx.now());
  });
  // Housekeeping finishes what fails here (and a deferred rewrite), and logs why.
  await removeShreddedKeyFiles(ctx, [input.electionId]).catch(() => undefined);
  await rewriteShreddedTables(ctx.knex, 2_000).catch(() => undefined);
}

/** The retention job: shreds every published election whose keep-sealed period has ended. Returns how many. */
export async function shredDue(ctx: UseCaseContext): Promise<number> {
  const shredded = await ctx.knex.transaction(async (trx) => {
    const now = ctx.now();
    // SKIP LOCKED: two app servers running the job at once share the work instead of waiting.
    const due: Array<{ id: string }> = await trx('elections')
      .where('state', 'published')
      .whereNull('shredded_at')
      .whereNotNull('shred_after')
      .andWhere('shred_after', '<=', now)
      .forUpdate()
      .skipLocked()
      .select('id');
    for (const { id } of due) await shredInTransaction(trx, id, null, now);
    return due.length;
  });
  // Also the retry for key files and rewrites that failed after earlier shreds.
  await removeShreddedKeyFiles(ctx);
  await rewriteShreddedTables(ctx.knex);
  return shredded;
}
