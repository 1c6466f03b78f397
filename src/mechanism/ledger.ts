import { decimalWithPrecision } from './decimal.ts';
import { InvalidMechanismConfig } from './errors.ts';

/**
 * The privacy ledger's arithmetic. Basic composition (Dwork & Roth 2014, Thm 3.16): releases
 * that are ε₁-, ε₂-, …-differentially private about the same people are together
 * (ε₁ + ε₂ + …)-differentially private, whatever the releases were. So a group's spending is
 * the plain sum of the ε of every draw over it. Sums are exact: every ε is a decimal with at
 * most 4 places, so 40 significant digits never round.
 */
const Decimal = decimalWithPrecision(40);

/**
 * Releases with no finite ε: whether anyone voted at all, an exact turnout when published, and
 * whether a bylaw quorum was met when one was set (one exact bit).
 */
export type UnprotectedRelease = 'anyone-voted' | 'exact-turnout' | 'quorum-met';
export const UNPROTECTED_RELEASES: readonly UnprotectedRelease[] = ['anyone-voted', 'exact-turnout', 'quorum-met'];

export interface LedgerEntry {
  chargedAt: Date;
  howVotedEpsilon: string;
  whetherVotedEpsilon: string;
  unprotected: readonly UnprotectedRelease[];
}

export interface LedgerTotals {
  /** Start of the window (exclusive) and its end (inclusive), both to the minute. */
  windowStart: string;
  windowEnd: string;
  draws: number;
  /** Σ ε for what members ticked, over the window. */
  howVotedEpsilon: string;
  /** Σ ε for whether a member voted; not a bound on its own when exactTurnoutReleases > 0. */
  whetherVotedEpsilon: string;
  anyoneVotedReleases: number;
  exactTurnoutReleases: number;
}

const DECIMAL = /^(0|[1-9][0-9]*)(\.[0-9]+)?$/;

function checkDecimal(text: string): string {
  if (typeof text !== 'string' || !DECIMAL.test(text)) throw new InvalidMechanismConfig(`"${String(text).slice(0, 20)}" is not a plain decimal ε`);
  return text;
}

/** Exact sum of decimal strings, written without exponent or trailing zeros ("0.5" + "0.5" = "1"). */
export function sumEpsilons(values: readonly string[]): string {
  const total = values.reduce((acc, v) => acc.plus(checkDecimal(v)), new Decimal(0));
  return total.toFixed();
}

/** Is a > b, exactly? */
export function epsilonExceeds(a: string, b: string): boolean {
  return new Decimal(checkDecimal(a)).gt(checkDecimal(b));
}

/** The instant minutes are shown to: ISO 8601 in UTC without seconds. */
export function toMinute(d: Date): string {
  return d.toISOString().slice(0, 16) + 'Z';
}

/** Twelve calendar months before `at` (UTC). */
export function yearBefore(at: Date): Date {
  const d = new Date(at.getTime());
  d.setUTCFullYear(d.getUTCFullYear() - 1);
  return d;
}

/** Totals of the entries charged in the 12 months up to and including `at`. */
export function ledgerTotals(entries: readonly LedgerEntry[], at: Date): LedgerTotals {
  const start = yearBefore(at);
  const inWindow = entries.filter((e) => e.chargedAt > start && e.chargedAt <= at);
  return {
    windowStart: toMinute(start),
    windowEnd: toMinute(at),
    draws: inWindow.length,
    howVotedEpsilon: sumEpsilons(inWindow.map((e) => e.howVotedEpsilon)),
    whetherVotedEpsilon: sumEpsilons(inWindow.map((e) => e.whetherVotedEpsilon)),
    anyoneVotedReleases: inWindow.filter((e) => e.unprotected.includes('anyone-voted')).length,
    exactTurnoutReleases: inWindow.filter((e) => e.unprotected.includes('exact-turnout')).length,
  };
}

export interface BudgetCheck {
  /** Σ how-voted ε over the window, plus elections opened but not yet drawn, plus this one. */
  projected: string;
  budget: string;
  exceeds: boolean;
}

/**
 * Would one more draw at `howVotedEpsilon` take the group past its annual budget? Elections
 * already open but not drawn are counted as if drawn, since each will be charged at its draw.
 */
export function checkBudget(input: { spent: string; pending: readonly string[]; next: string; budget: string }): BudgetCheck {
  const projected = sumEpsilons([input.spent, ...input.pending, input.next]);
  return { projected, budget: input.budget, exceeds: epsilonExceeds(projected, input.budget) };
}

/**
 * What one draw costs for how a member voted: ε under replace-one, 2ε under add/remove (a changed
 * ballot is one removal and one addition). Must agree with makeExponentialDraw's privacy.howVoted.
 */
export function howVotedCost(epsilon: string, neighbour: 'replace-one' | 'add-remove'): string {
  return neighbour === 'add-remove' ? sumEpsilons([epsilon, epsilon]) : sumEpsilons([epsilon]);
}

/** Totals for a ledger kept per member: each field is the most any one member of the electorate has. */
export type MemberLedgerTotals = LedgerTotals;

/**
 * The ledger of an electorate whose members are known (a roster): each member's own totals over
 * the 12 months up to `at`, and of these the most any member has, field by field (the member with
 * the most ε for how they voted need not be the one with the most draws). By basic composition
 * each member's own sum bounds what all the draws over them together reveal about them; the
 * maximum bounds it for every member at once. `byMember` maps an opaque member key to that
 * member's entries; a member with none has spent nothing.
 */
export function mostSpentByAMember(byMember: ReadonlyMap<string, readonly LedgerEntry[]>, at: Date): MemberLedgerTotals {
  const none = ledgerTotals([], at);
  // Members with the same entries have the same totals: compute each distinct list once.
  const seen = new Map<readonly LedgerEntry[], LedgerTotals>();
  let most = none;
  for (const entries of byMember.values()) {
    const t = seen.get(entries) ?? ledgerTotals(entries, at);
    seen.set(entries, t);
    most = {
      ...most,
      draws: Math.max(most.draws, t.draws),
      howVotedEpsilon: epsilonExceeds(t.howVotedEpsilon, most.howVotedEpsilon) ? t.howVotedEpsilon : most.howVotedEpsilon,
      whetherVotedEpsilon: epsilonExceeds(t.whetherVotedEpsilon, most.whetherVotedEpsilon) ? t.whetherVotedEpsilon : most.whetherVotedEpsilon,
      anyoneVotedReleases: Math.max(most.anyoneVotedReleases, t.anyoneVotedReleases),
      exactTurnoutReleases: Math.max(most.exactTurnoutReleases, t.exactTurnoutReleases),
    };
  }
  return most;
}

export interface MemberBudgetCheck extends BudgetCheck {
  /** Members of the electorate. */
  members: number;
  /** How many of them one more draw at `next` would take past the budget. */
  membersOver: number;
  /** The most ε for how they voted any member has spent in the window (charged draws only). */
  mostSpent: string;
  /** `projected` is the most any member would reach: spent + pending + next. */
}

/**
 * checkBudget for every member of an electorate: would one more draw at `next` take any member past
 * the annual budget? Each member's spending is their own charged draws in the window plus the
 * elections over them that are open and not yet drawn (each will be charged at its draw).
 */
export function checkMemberBudget(input: {
  members: ReadonlyMap<string, { spent: readonly string[]; pending: readonly string[] }>;
  next: string;
  budget: string;
}): MemberBudgetCheck {
  let projected = sumEpsilons([input.next]);
  let mostSpent = '0';
  let membersOver = 0;
  for (const m of input.members.values()) {
    const spent = sumEpsilons(m.spent);
    const check = checkBudget({ spent, pending: m.pending, next: input.next, budget: input.budget });
    if (check.exceeds) membersOver++;
    if (epsilonExceeds(check.projected, projected)) projected = check.projected;
    if (epsilonExceeds(spent, mostSpent)) mostSpent = spent;
  }
  return { projected, budget: input.budget, exceeds: membersOver > 0, members: input.members.size, membersOver, mostSpent };
}
