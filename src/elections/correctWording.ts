import { z } from 'zod';
import { InvalidInput } from '../errors.ts';
import { recordEvent } from './audit.ts';
import type { UseCaseContext } from './context.ts';
import { DRAFT_LIMITS } from './draft.ts';
import { ownedElection } from './electionAccess.ts';
import { ElectionStateConflict } from './errors.ts';

/**
 * Corrections after the rule is locked. Option labels, their order, seats and ε never change
 * (they are what members approve and what the statement names). Before voting starts (a
 * scheduled election), the title, the description and the option descriptions may be corrected;
 * once voting has started, only the description, and that change goes on the public timeline.
 * A draft is changed in the ordinary editor; after voting ends nothing changes.
 */
export type WordingScope = 'before-voting' | 'during-voting';

export function wordingScope(e: { state: string; opensAt: Date; closesAt: Date }, now: Date): WordingScope | null {
  if (e.state !== 'open' || now >= e.closesAt) return null;
  return now < e.opensAt ? 'before-voting' : 'during-voting';
}

const L = DRAFT_LIMITS;
const wording = z.object({
  title: z.string().trim().min(1, 'Give the election a title.').max(L.titleMax, `Keep the title to ${L.titleMax} characters or fewer.`),
  description: z.string().trim().max(L.descriptionMax, `Keep the description to ${L.descriptionMax} characters or fewer.`),
  optionDescriptions: z.array(
    z.string().trim().max(L.optionDescriptionMax, `Keep the description to ${L.optionDescriptionMax} characters or fewer.`),
  ),
});

export interface WordingInput {
  title: string;
  description: string;
  optionDescriptions: string[];
}

export async function correctWording(
  ctx: UseCaseContext,
  input: { electionId: string; organiserId: string; wording: WordingInput },
): Promise<{ changed: string[] }> {
  const parsed = wording.safeParse(input.wording);
  if (!parsed.success) {
    const issues = parsed.error.issues.map((i) => ({ path: i.path.join('.'), message: i.message }));
    throw new InvalidInput('Please correct the highlighted fields.', issues);
  }
  const w = parsed.data;
  return ctx.knex.transaction(async (trx) => {
    const e = await ownedElection(trx, input.electionId, input.organiserId, { lock: true });
    const now = ctx.now();
    const scope = wordingScope(e, now);
    if (e.state === 'draft') throw new ElectionStateConflict('This election is still a draft: change it in the draft editor.');
    if (!scope) throw new ElectionStateConflict('Voting has ended, so the wording of this election can no longer change.');
    if (w.optionDescriptions.length !== e.options.length) throw new InvalidInput('The options of this election have changed; reload the page.');
    const changed: string[] = [];
    if (w.description !== e.description) changed.push('description');
    if (w.title !== e.title) changed.push('title');
    if (w.optionDescriptions.some((d, i) => d !== e.options[i]!.description)) changed.push('option descriptions');
    if (scope === 'during-voting' && changed.some((c) => c !== 'description')) {
      throw new ElectionStateConflict('Voting has started, so only the description can change. The title and the options stay as members saw them.');
    }
    if (changed.length === 0) return { changed };
    await trx('elections').where({ id: e.id }).update({ title: w.title, description: w.description, updated_at: now });
    for (const [i, d] of w.optionDescriptions.entries()) {
      if (d !== e.options[i]!.description) await trx('options').where({ election_id: e.id, position: i }).update({ description: d });
    }
    // During voting members may already have read the old description: the change is public.
    const action = scope === 'during-voting' ? 'description-edited' : 'wording-corrected';
    await recordEvent(trx, { electionId: e.id, organiserId: input.organiserId, action, detail: { changed: changed.join(', ') } }, now);
    return { changed };
  });
}
