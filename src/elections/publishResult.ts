import { recordEvent } from './audit.ts';
import type { UseCaseContext } from './context.ts';
import { ownedElection } from './electionAccess.ts';
import { AlreadyPublished, NotTallied } from './errors.ts';
import { retentionDaysSchema, rewriteShreddedTables, shredInTransaction } from './shred.ts';

const DAY_MS = 24 * 60 * 60 * 1000;

/**
 * Publishes the drawn result (state tallied → published). Retention: with no
 * retention_days the key and ciphertexts are shredded in this same transaction;
 * otherwise they stay sealed until shred_after = now + N days (shredDue).
 */
export async function publishResult(ctx: UseCaseContext, input: { electionId: string; organiserId: string }): Promise<void> {
  await ctx.knex.transaction(async (trx) => {
    const e = await ownedElection(trx, input.electionId, input.organiserId, { lock: true });
    if (e.state === 'published') throw new AlreadyPublished();
    if (e.state !== 'tallied') throw new NotTallied();
    const now = ctx.now();
    // A stored value outside 1..90 is a bug elsewhere: refuse rather than keep ballots too long.
    const days = retentionDaysSchema.parse(e.retentionDays);
    const shredAfter = days === null ? null : new Date(now.getTime() + days * DAY_MS);
    await trx('elections')
      .where({ id: e.id })
      .update({ state: 'published', published_at: now, shred_after: shredAfter, updated_at: now });
    await recordEvent(trx, { electionId: e.id, organiserId: input.organiserId, action: 'published' }, now);
    if (shredAfter === null && !e.shreddedAt) await shredInTransaction(trx, e.id, input.organiserId, now);
  });
  // After commit: rewrite the tables so no dead row version keeps the key (shred.ts). If this fails,
  // the housekeeping round retries it; the publication itself stands.
  await rewriteShreddedTables(ctx.knex).catch(() => undefined);
}
