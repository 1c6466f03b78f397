import { recordEvent } from './audit.ts';
import type { UseCaseContext } from './context.ts';
import { checkDraft, type DraftInput } from './draft.ts';
import { updateDraftRow } from './draftRepo.ts';
import { ownedElection } from './electionAccess.ts';
import { checkElectorate } from './electorate.ts';
import { ElectionLocked } from './errors.ts';
import { isEditable } from './status.ts';

/** Changes a draft's settings. Once opened, everything is locked (ElectionLocked). */
export async function updateDraft(ctx: UseCaseContext, input: { electionId: string; organiserId: string; draft: DraftInput }): Promise<void> {
  const draft = checkDraft(input.draft);
  await ctx.knex.transaction(async (trx) => {
    const e = await ownedElection(trx, input.electionId, input.organiserId, { lock: true });
    if (!isEditable(e)) throw new ElectionLocked();
    await checkElectorate(trx, draft.rosterId, input.organiserId, e.rosterId);
    const now = ctx.now();
    await updateDraftRow(trx, e.id, e.ownerId, draft, now);
    await recordEvent(trx, { electionId: e.id, organiserId: input.organiserId, action: 'draft-edited' }, now);
  });
}
