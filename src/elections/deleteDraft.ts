import { recordEvent } from './audit.ts';
import type { UseCaseContext } from './context.ts';
import { ownedElection } from './electionAccess.ts';
import { ElectionStateConflict } from './errors.ts';

/**
 * Deletes a draft and everything hanging from it (options, unused codes, its own activity
 * record, by ON DELETE CASCADE). Nothing public ever existed: a draft has no ballots and no
 * public page. Once opened, an election is a promise to members and is never deleted.
 * The organiser's record keeps one line that the draft was deleted, with its title.
 */
export async function deleteDraft(ctx: UseCaseContext, input: { electionId: string; organiserId: string }): Promise<{ title: string }> {
  const deleted = await ctx.knex.transaction(async (trx) => {
    const e = await ownedElection(trx, input.electionId, input.organiserId, { lock: true });
    if (e.state !== 'draft') throw new ElectionStateConflict('Only a draft can be deleted. This election has been opened, so it stays on record.');
    const now = ctx.now();
    await trx('elections').where({ id: e.id, state: 'draft' }).delete();
    await recordEvent(trx, { electionId: null, organiserId: input.organiserId, action: 'draft-deleted', detail: { title: e.title } }, now);
    return { id: e.id, title: e.title };
  });
  // No row refers to its key file any more (a draft has no ballots, only the wrapped key).
  await ctx.keyFiles.remove(deleted.id);
  return { title: deleted.title };
}
