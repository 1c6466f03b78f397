import type { GroupLedger } from '../../elections/ledger.ts';
import { yearBefore } from '../../mechanism/index.ts';
import { describeInstant } from '../../elections/timeText.ts';

const UNPROTECTED_TEXT: Record<string, string> = {
  'anyone-voted': 'whether anyone voted at all',
  'exact-turnout': 'the exact turnout',
  'quorum-met': 'whether the quorum was met',
};

export interface LedgerRowView {
  electionTitle: string;
  resultUrl: string | null;
  chargedAt: { iso: string; text: string };
  howVoted: string;
  whetherVoted: string;
  unprotected: string;
  published: boolean;
  inWindow: boolean;
}

export interface LedgerPageView {
  groupName: string;
  rows: LedgerRowView[];
  howVotedTotal: string;
  whetherVotedTotal: string;
  whetherVotedBounded: boolean;
  draws: number;
  budget: string;
  overBudget: boolean;
  windowStart: string;
}

/** The ledger spans elections in several zones, so its times are in UTC, in the style of every other page. */
const minuteText = (d: Date) => describeInstant(d, 'UTC');

/** The public ledger page: every charge to the group, newest first, and the 12-month totals. */
export function ledgerPageView(l: GroupLedger): LedgerPageView {
  const start = yearBefore(new Date(l.totals.windowEnd));
  return {
    groupName: l.group.name,
    rows: [...l.rows].reverse().map((r) => ({
      electionTitle: r.electionTitle,
      resultUrl: `/results/${r.electionId}`,
      chargedAt: { iso: r.chargedAt.toISOString(), text: minuteText(r.chargedAt) },
      howVoted: r.howVotedEpsilon,
      whetherVoted: r.unprotected.includes('exact-turnout') ? `${r.whetherVotedEpsilon}, but the exact turnout was published` : r.whetherVotedEpsilon,
      unprotected: r.unprotected.map((u) => UNPROTECTED_TEXT[u] ?? u).join('; '),
      published: r.published,
      inWindow: r.chargedAt > start,
    })),
    howVotedTotal: l.totals.howVotedEpsilon,
    whetherVotedTotal: l.totals.whetherVotedEpsilon,
    whetherVotedBounded: l.totals.exactTurnoutReleases === 0,
    draws: l.totals.draws,
    budget: l.budget,
    overBudget: Number(l.totals.howVotedEpsilon) > Number(l.budget),
    windowStart: minuteText(start),
  };
}
