import { checkBudget, howVotedCost, ledgerTotals, sumEpsilons, yearBefore, type BudgetCheck, type LedgerTotals } from '../mechanism/index.ts';
import type { Db } from '../db/knex.ts';
import { DEFAULT_LEDGER_POLICY, type UseCaseContext } from './context.ts';
import { electionOwner, findGroup, findGroupByName, listLedger, pendingDraws, type LedgerRow, type MemberGroup } from './ledgerRepo.ts';
import { NotFound } from '../errors.ts';

export { DEFAULT_GROUP_NAME } from './ledgerRepo.ts';

/** A group's public ledger: every charge, and the totals over the 12 months up to now. */
export interface GroupLedger {
  group: MemberGroup;
  rows: LedgerRow[];
  totals: LedgerTotals;
  budget: string;
}

export async function loadGroupLedger(ctx: UseCaseContext, groupId: string): Promise<GroupLedger> {
  const group = await findGroup(ctx.knex, groupId);
  if (!group) throw new NotFound('We could not find that member group.');
  // A draw shows from its whole minute (closeAndTally stamps it there), so a charge stamped
  // later than now is not listed yet: the ledger must not tell a draw's time more finely.
  const now = ctx.now();
  const rows = (await listLedger(ctx.knex, group.id)).filter((r) => r.chargedAt <= now);
  const policy = ctx.ledgerPolicy ?? DEFAULT_LEDGER_POLICY;
  return { group, rows, totals: ledgerTotals(rows, now), budget: policy.annualBudget };
}

export interface BudgetPreview extends BudgetCheck {
  groupName: string;
  groupId: string | null;
  /** Σ how-voted ε already charged in the 12 months to now. */
  spent: string;
  draws: number;
  /** Elections of the group already open or closed and not yet drawn. */
  pending: number;
  allowOverBudget: boolean;
}

/**
 * What opening one more election at this ε would do to the group's 12-month total. Used by the
 * election form (a warning) and by openElection (a refusal unless the configuration allows it).
 * The group is the election owner's (ownerId for an election not made yet): groups are per organiser.
 */
export async function budgetPreview(
  db: Db,
  ctx: Pick<UseCaseContext, 'now' | 'ledgerPolicy'>,
  input: { ownerId: string; groupName: string; epsilon: string; neighbour: 'replace-one' | 'add-remove'; electionId?: string },
): Promise<BudgetPreview> {
  const policy = ctx.ledgerPolicy ?? DEFAULT_LEDGER_POLICY;
  const ownerId = (input.electionId ? await electionOwner(db, input.electionId) : null) ?? input.ownerId;
  const group = await findGroupByName(db, ownerId, input.groupName);
  const rows = group ? await listLedger(db, group.id) : [];
  // Every charge of the last 12 months counts, including one stamped at the coming minute.
  const now = ctx.now();
  const since = yearBefore(now);
  const recent = rows.filter((r) => r.chargedAt > since);
  const totals = { howVotedEpsilon: sumEpsilons(recent.map((r) => r.howVotedEpsilon)), draws: recent.length };
  const pending = group ? await pendingDraws(db, group.id, input.electionId) : [];
  const check = checkBudget({
    spent: totals.howVotedEpsilon,
    pending: pending.map((p) => howVotedCost(p.epsilon, p.neighbour as 'replace-one' | 'add-remove')),
    next: howVotedCost(input.epsilon, input.neighbour),
    budget: policy.annualBudget,
  });
  return {
    ...check,
    groupName: group?.name ?? input.groupName.trim(),
    groupId: group?.id ?? null,
    spent: totals.howVotedEpsilon,
    draws: totals.draws,
    pending: pending.length,
    allowOverBudget: policy.allowOverBudget,
  };
}

/** A member group's name, for the election form; empty when the election has no group yet (or the group is gone). */
export async function groupNameOf(ctx: UseCaseContext, groupId: string | null): Promise<string> {
  return groupId ? ((await findGroup(ctx.knex, groupId))?.name ?? '') : '';
}
