import type { Db } from '../db/knex.ts';
import { recordEvent } from './audit.ts';
import { findElection, type Election } from './electionRepo.ts';
import type { UseCaseContext } from './context.ts';
import { ownedElection } from './electionAccess.ts';
import { AlreadyPublished, NotTallied } from './errors.ts';
import { retentionDaysSchema, rewriteShreddedTables, shredInTransaction } from './shred.ts';
import { removeShreddedKeyFiles } from './shredKeys.ts';

const DAY_MS = 24 * 60 * 60 * 1000;

/**
 * Publishes the drawn result (state tallied → published): by the organiser (organiserId), or by
 * the housekeeping job when the preview's deadline has passed (null; publishDue). Retention: with
 * no retention_days the key and ciphertexts are shredded in this same transaction; otherwise they
 * stay sealed until shred_after = now + N days (shredDue).
 */
export async function publishResult(ctx: UseCaseContext, input: { electionId: string; organiserId: string | null }): Promise<void> {
  await ctx.knex.transaction(async (trx) => {
    const e = await ownedElection(trx, input.electionId, input.organiserId, {
      lock: true,
    });
    await publishLocked(trx, e, input.organiserId, ctx.now());
  });
  // After commit: delete the key file and rewrite the tables (shred.ts). If either fails, the
  // housekeeping round retries it; the publication itself stands.
  await removeShreddedKeyFiles(ctx, [input.electionId]).catch(() => undefined);
  await rewriteShreddedTables(ctx.knex, 2_000).catch(() => undefined);
}

async function publishLocked(trx: Db, e: Election, organiserId: string | null, clock: Date): Promise<void> {
  if (e.state === 'published') throw new AlreadyPublished();
  if (e.state !== 'tallied') throw new NotTallied();
  const now = clock;
  // A stored value outside 1..90 is a bug elsewhere: refuse rather than keep ballots too long.
  const days = retentionDaysSchema.parse(e.retentionDays);
  const shredAfter = days === null ? null : new Date(now.getTime() + days * DAY_MS);
  await trx('elections').where({ id: e.id }).update({
    state: 'published',
    published_at: now,
    shred_after: shredAfter,
    updated_at: now,
  });
  await recordEvent(trx, { electionId: e.id, organiserId, action: 'published' }, now);
  if (shredAfter === null && !e.shreddedAt) await shredInTransaction(trx, e.id, organiserId, now);
}

/**
 * The housekeeping job: every draw is published. A result still in preview when its deadline
 * (publish_due_at, at most 48 hours after the draw) passes is published now. SKIP LOCKED: app
 * servers running the job at once share the work, and the state check publishes each result once.
 */
export async function publishDue(ctx: UseCaseContext): Promise<number> {
  const published = await ctx.knex.transaction(async (trx) => {
    const now = ctx.now();
    const due: Array<{ id: string }> = await trx('elections')
      .where('state', 'tallied')
      .whereNotNull('publish_due_at')
      .andWhere('publish_due_at', '<=', now)
      .forUpdate()
      .skipLocked()
      .select('id');
    for (const { id } of due) {
      const e = await findElection(trx, id);
      if (e?.state === 'tallied') await publishLocked(trx, e, null, now);
    }
    return due;
  });
  await removeShreddedKeyFiles(
    ctx,
    published.map((d) => d.id),
  ).catch(() => undefined);
  await rewriteShreddedTables(ctx.knex, 2_000).catch(() => undefined);
  return published.length;
}
