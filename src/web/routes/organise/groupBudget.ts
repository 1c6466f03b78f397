import { budgetPreview, DEFAULT_GROUP_NAME, type BudgetPreview } from '../../../elections/ledger.ts';
import type { UseCaseContext } from '../../../elections/context.ts';
import { parseEpsilon } from '../../../mechanism/index.ts';
import type { ElectionFormValues } from './electionSchema.ts';

/** The privacy-ledger preview the election form shows; null while the group or ε is not usable yet. */
export async function groupBudget(
  ctx: UseCaseContext,
  v: ElectionFormValues,
  electionId: string | null,
  organiserId: string,
): Promise<BudgetPreview | null> {
  // A roster election is charged to its members, and their budget is checked when it opens: the group's figures do not apply.
  if (v.electorate !== 'printed') return null;
  const name = v.memberGroup.trim() || DEFAULT_GROUP_NAME;
  if (name.length > 120) return null;
  try {
    parseEpsilon(v.epsilon.trim());
  } catch {
    return null;
  }
  const neighbour = v.neighbour === 'add-remove' ? 'add-remove' : 'replace-one';
  return budgetPreview(ctx.knex, ctx, {
    ownerId: organiserId,
    groupName: name,
    epsilon: v.epsilon.trim(),
    neighbour,
    electionId: electionId ?? undefined,
  });
}
