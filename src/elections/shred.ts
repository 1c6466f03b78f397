import { z } from 'zod';
import type { Db } from '../db/knex.ts';
import { recordEvent } from './audit.ts';
import { deleteBallots } from './ballotRepo.ts';
import type { UseCaseContext } from './context.ts';
import { ownedElection } from './electionAccess.ts';
import { ElectionStateConflict, ResultNotPublished } from './errors.ts';

/** Retention choice: null = shred at publication (default); otherwise keep sealed 1–90 days, then shred. */
export const RETENTION_DAYS_MAX = 90;
export const retentionDaysSchema = z
  .number()
  .int()
  .min(1, 'Keep sealed ballots for at least 1 day, or choose to shred them at publication.')
  .max(RETENTION_DAYS_MAX, `Sealed ballots can be kept for at most ${RETENTION_DAYS_MAX} days.`)
  .nullable();

/**
 * Shredding (DESIGN §5): deletes the wrapped election key and every ciphertext, in the
 * caller's transaction, and records when. Afterwards no ballot can ever be opened: the
 * secret key existed only wrapped, and the wrapped copy is gone. Receipts, code hashes,
 * the public key and the signed result stay. Deleted rows can linger in PostgreSQL pages
 * and backups until vacuumed or rotated; the threat model says so.
 */
export async function shredInTransaction(
  trx: Db,
  electionId: string,
  organiserId: string | null,
  now: Date,
): Promise<void> {
  await deleteBallots(trx, electionId);
  await trx('elections').where({ id: electionId }).update({ wrapped_key: null, shredded_at: now, updated_at: now });
  await recordEvent(trx, { electionId, organiserId, action: 'shredded' }, now);
}

/**
 * Shreds one election now: the organiser choosing to (organiserId) or the retention job
 * (null). Only after publication: a draw that was never published could otherwise vanish and be
 * made again in a new election with the same options (a re-roll costing every member ε more).
 * Already shredded: no change.
 */
export async function shredElection(
  ctx: UseCaseContext,
  input: { electionId: string; organiserId: string | null },
): Promise<void> {
  await ctx.knex.transaction(async (trx) => {
    const e = await ownedElection(trx, input.electionId, input.organiserId, { lock: true });
    if (e.shreddedAt) return;
    if (e.state === 'tallied') throw new ResultNotPublished();
    if (e.state !== 'published') {
      throw new ElectionStateConflict('Sealed ballots can only be shredded after the result is drawn and published.');
    }
    await shredInTransaction(trx, e.id, input.organiserId, ctx.now());
  });
}

/** The retention job: shreds every published election whose keep-sealed period has ended. Returns how many. */
export async function shredDue(ctx: UseCaseContext): Promise<number> {
  return ctx.knex.transaction(async (trx) => {
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
}
