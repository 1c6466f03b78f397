import {
  checkBudget,
  checkMemberBudget,
  howVotedCost,
  ledgerTotals,
  mostSpentByAMember,
  sumEpsilons,
  yearBefore,
  type BudgetCheck,
  type LedgerEntry,
  type LedgerTotals,
  type MemberBudgetCheck,
} from '../mechanism/index.ts';
import type { Db } from '../db/knex.ts';
import { DEFAULT_LEDGER_POLICY, type UseCaseContext } from './context.ts';
import {
  electionOwner,
  electionsOfMembers,
  electionsWithCharges,
  findGroup,
  findGroupByName,
  listLedger,
  pendingDraws,
  type ElectorateElection,
  type LedgerRow,
  type MemberGroup,
} from './ledgerRepo.ts';
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

/**
 * The history of every member of a roster election's electorate (fixed at its opening): for each
 * member, the elections over them, this one excluded, and whether they hold a second code in this
 * one. Members with the same elections share one list, so a roster of thousands who always vote
 * together costs one list. An election where the member held a second code (a replacement) is
 * listed with `secondCode`, its charge doubled: two codes are two records (group privacy, Dwork &
 * Roth 2014 Thm 2.2: k records, kε), for how they voted and for whether they voted.
 */
interface MemberHistory {
  elections: ElectorateElection[];
  secondCodeHere: boolean;
}

const twice = (c: LedgerEntry): LedgerEntry => ({
  ...c,
  howVotedEpsilon: sumEpsilons([c.howVotedEpsilon, c.howVotedEpsilon]),
  whetherVotedEpsilon: sumEpsilons([c.whetherVotedEpsilon, c.whetherVotedEpsilon]),
});

/** An election's cost to a member: its charge once drawn, else what its draw will charge; twice with a second code. */
const chargeTo = (e: ElectorateElection): LedgerEntry | null => (e.charge && e.secondCode ? twice(e.charge) : e.charge);
const pendingCost = (e: ElectorateElection): string => {
  const c = howVotedCost(e.epsilon, e.neighbour);
  return e.secondCode ? sumEpsilons([c, c]) : c;
};

async function memberHistories(db: Db, electionId: string): Promise<Map<string, MemberHistory>> {
  const pairs = await electionsOfMembers(db, electionId);
  const ids = new Map<string, { list: string[]; here: boolean }>();
  for (const p of pairs) {
    const m = ids.get(p.member) ?? { list: [], here: false };
    if (p.electionId !== electionId) m.list.push(p.secondCode ? `${p.electionId}*2` : p.electionId);
    else m.here = p.secondCode;
    ids.set(p.member, m);
  }
  const elections = new Map((await electionsWithCharges(db, [...new Set(pairs.map((p) => p.electionId))])).map((e) => [e.id, e]));
  const shared = new Map<string, ElectorateElection[]>();
  const out = new Map<string, MemberHistory>();
  for (const [member, { list, here }] of ids) {
    const key = [...list].sort().join(',');
    let history = shared.get(key);
    if (!history) {
      history = list.map((id) => {
        const e = elections.get(id.replace(/\*2$/, ''))!;
        return id.endsWith('*2') ? { ...e, secondCode: true as const } : e;
      });
      shared.set(key, history);
    }
    out.set(member, { elections: history, secondCodeHere: here });
  }
  return out;
}

export interface MemberBudgetPreview extends MemberBudgetCheck {
  allowOverBudget: boolean;
}

/**
 * What drawing this roster election at its ε would do to each member's 12-month total: their
 * charged draws in the window, the elections over them open and not drawn yet, and this one. The
 * electorate must already be recorded (openElection records it first, in the same transaction).
 */
export async function memberBudgetPreview(
  db: Db,
  ctx: Pick<UseCaseContext, 'now' | 'ledgerPolicy'>,
  input: { electionId: string; epsilon: string; neighbour: 'replace-one' | 'add-remove' },
): Promise<MemberBudgetPreview> {
  const policy = ctx.ledgerPolicy ?? DEFAULT_LEDGER_POLICY;
  const since = yearBefore(ctx.now());
  const histories = await memberHistories(db, input.electionId);
  const costs = new Map<ElectorateElection[], { spent: string[]; pending: string[] }>();
  const members = new Map<string, { spent: string[]; pending: string[] }>();
  for (const [member, { elections: history }] of histories) {
    let c = costs.get(history);
    if (!c) {
      c = {
        spent: history.filter((e) => e.charge && e.charge.chargedAt > since).map((e) => chargeTo(e)!.howVotedEpsilon),
        pending: history.filter((e) => !e.charge && (e.state === 'open' || e.state === 'closed')).map(pendingCost),
      };
      costs.set(history, c);
    }
    members.set(member, c);
  }
  const check = checkMemberBudget({ members, next: howVotedCost(input.epsilon, input.neighbour), budget: policy.annualBudget });
  return { ...check, allowOverBudget: policy.allowOverBudget };
}

/**
 * The ledger totals of a roster election's electorate at `at`, this election's own charge
 * included: each field the most any member has (mostSpentByAMember). For the signed statement.
 */
export async function electorateTotals(db: Db, electionId: string, at: Date): Promise<LedgerTotals> {
  const histories = await memberHistories(db, electionId);
  const own = (await electionsWithCharges(db, [electionId]))[0]?.charge;
  const entries = new Map<ElectorateElection[], [LedgerEntry[] | null, LedgerEntry[] | null]>();
  const byMember = new Map<string, LedgerEntry[]>();
  for (const [member, { elections: history, secondCodeHere }] of histories) {
    const pair = entries.get(history) ?? [null, null];
    entries.set(history, pair);
    // A holder of a second code in this election is charged its draw twice.
    const which = secondCodeHere ? 1 : 0;
    let list = pair[which];
    if (!list) {
      const mine = own ? [secondCodeHere ? twice(own) : own] : [];
      list = [...mine, ...history.flatMap((e) => (e.charge ? [chargeTo(e)!] : []))];
      pair[which] = list;
    }
    byMember.set(member, list);
  }
  return mostSpentByAMember(byMember, at);
}
