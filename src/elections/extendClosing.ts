import { InvalidInput } from '../errors.ts';
import { recordEvent } from './audit.ts';
import type { UseCaseContext } from './context.ts';
import { ownedElection } from './electionAccess.ts';
import { ElectionStateConflict } from './errors.ts';

/** How far ahead a closing time may be moved in one step (our choice: long enough for any postponed meeting). */
export const EXTEND_MAX_DAYS = 90;

/**
 * Moves the closing time of an open (or scheduled) election later. Only later: a closing time
 * brought forward could end voting under members' feet, and "Close voting now" exists for
 * that. Never once voting has ended (an ended vote is not reopened). Recorded in the
 * organiser's activity and on the public timeline, so members see that the time changed.
 */
export async function extendClosing(
  ctx: UseCaseContext,
  input: { electionId: string; organiserId: string; closesAt: Date },
): Promise<{ from: Date; to: Date }> {
  return ctx.knex.transaction(async (trx) => {
    const e = await ownedElection(trx, input.electionId, input.organiserId, { lock: true });
    const now = ctx.now();
    if (e.state !== 'open' || now >= e.closesAt) {
      throw new ElectionStateConflict(
        'The closing time can only be moved while voting is open or scheduled. Voting has ended, and it is not reopened.',
      );
    }
    const to = input.closesAt;
    const issue0 = (message: string) => new InvalidInput(message, [{ path: 'closesAt', message }]);
    // The live turnout's releases, and its noise (which depends on how many there are), were fixed
    // before opening: more releases would need more noise on nodes already released.
    if (e.liveTurnout)
      throw issue0('This election has a live turnout, whose releases were fixed before opening, so its closing time cannot be moved.');
    const issue = (message: string) => new InvalidInput(message, [{ path: 'closesAt', message }]);
    if (!(to instanceof Date) || Number.isNaN(to.getTime())) throw issue('Enter a date and time, for example 2026-05-14T18:30.');
    if (to.getTime() <= e.closesAt.getTime())
      throw issue('Choose a time after the current closing time. To end voting sooner, use “Close voting now”.');
    if (to.getTime() > now.getTime() + EXTEND_MAX_DAYS * 86_400_000) throw issue(`Choose a time at most ${EXTEND_MAX_DAYS} days from now.`);
    await trx('elections').where({ id: e.id, state: 'open' }).update({ closes_at: to, updated_at: now });
    await recordEvent(
      trx,
      {
        electionId: e.id,
        organiserId: input.organiserId,
        action: 'closing-extended',
        detail: { from: e.closesAt.toISOString(), closesAt: to.toISOString() },
      },
      now,
    );
    return { from: e.closesAt, to };
  });
}
