import { recordEvent } from './audit.ts';
import type { UseCaseContext } from './context.ts';
import { ownedElection } from './electionAccess.ts';
import { ElectionStateConflict } from './errors.ts';

/**
 * "Close now": ends voting before the closing time. From the moment state is 'closed'
 * castBallot refuses (acceptsBallotsAt), whatever the clock says. The planned closing time
 * is kept, so the timeline shows both.
 */
export async function closeElection(ctx: UseCaseContext, input: { electionId: string; organiserId: string }): Promise<void> {
  await ctx.knex.transaction(async (trx) => {
    const e = await ownedElection(trx, input.electionId, input.organiserId, { lock: true });
    if (e.state !== 'open') throw new ElectionStateConflict('This election is not open, so there is nothing to close.');
    const now = ctx.now();
    await trx('elections').where({ id: e.id }).update({ state: 'closed', closed_at: now, updated_at: now });
    await recordEvent(trx, { electionId: e.id, organiserId: input.organiserId, action: 'closed', detail: { early: now < e.closesAt } }, now);
  });
}
