import { z } from 'zod';
import { memoised } from './memo.ts';
import type { AuditRow } from '../../elections/audit.ts';
import type { Election } from '../../elections/electionRepo.ts';
import { resultHidden } from '../../elections/status.ts';
import {
  STATEMENT_MECHANISMS,
  describeParties,
  describeStatement,
  makeDraw,
  makeExponentialDraw,
  quorumSentences,
  ruleOfStatementMechanism,
  type PartyText,
  type ReleasedItem,
  type PrivacyStatement,
  type StatementMechanism,
} from '../../mechanism/index.ts';
import { DRAW_CAUTION, votingWindow, type VotingWindow } from './ballot.ts';
import { marginChart, marginRows, type MarginChart } from './marginChart.ts';
import { shownTime, type ShownTime } from './publicTime.ts';
import { timelineView, type TimelineEntry } from './timeline.ts';
import { votingTimes } from '../../elections/votingTimes.ts';

/**
 * The public result page's view model. Every sentence about the draw and its privacy comes
 * from the stored statement through describeStatement; this file only picks fields to show.
 */
const protection = z.object({ epsilon: z.string(), factorAtMost: z.number() });
const statementShape = z
  .object({
    statementVersion: z.literal(1),
    mechanism: z.enum(STATEMENT_MECHANISMS),
    outcome: z.enum(['winners', 'no-ballots']),
    winners: z.array(z.string()),
    optionLabels: z.array(z.string()),
    epsilon: z.string(),
    neighbour: z.enum(['replace-one', 'add-remove']),
    seats: z.number().int().min(1),
    protects: z.object({ howVoted: protection, whetherVoted: protection.nullable() }),
    turnout: z.number().int().min(0).nullable(),
    replacements: z.number().int().min(0).optional(),
    quorum: z.object({ minimum: z.number().int().min(1), met: z.boolean() }).optional(),
  })
  .loose();
const storedResult = z.object({ statement: statementShape }).loose();

const NEIGHBOURS = {
  'replace-one': {
    name: 'Replace one ballot',
    means: 'The guarantee compares this result with one where any single member’s ballot is swapped for any other ballot.',
  },
  'add-remove': {
    name: 'Add or remove one ballot',
    means: 'The guarantee compares this result with one where a single ballot is added or taken away.',
  },
} as const;

export type { TimelineEntry } from './timeline.ts';

/** One option as the result page lists it: ballot order, and whether (and in which draw) it was drawn. */
export interface ResultOption {
  label: string;
  /** "Drawn 1st"…, "Drawn" for a single seat, or null when not drawn. */
  drawn: string | null;
}

/** The data-free chart of the lead needed against the chance the leader is drawn, for this election's settings. */
export interface ResultChart {
  chart: MarginChart;
  rows: { margin: number; percent: string; marked: boolean }[];
  caption: string;
}

export interface PublishedResultView {
  headline: string;
  /** What members, the public and the organiser could each learn (src/mechanism/describeParties.ts). */
  parties: PartyText[];
  /** One short paragraph, in plain words, on what the announcement means. */
  meaning: string;
  /** For several seats: that the order is the draw order, not a ranking. */
  orderNote: string | null;
  winnersHeading: string;
  /** order: "Drawn 1st"… for several seats, empty for one. */
  winnerEntries: { order: string; label: string }[];
  options: ResultOption[];
  chart: ResultChart | null;
  paragraphs: string[];
  boundsSentence: string;
  caution: string;
  noBallots: boolean;
  winners: string[];
  turnout: number | null;
  /** Only when a bylaw quorum was set: the exact answer and why it is not protected. */
  quorum: { met: boolean; answer: string; caution: string } | null;
  /** Everything the result releases, keyed as in the signed statement (describe.ts, releasedItems). */
  released: ReleasedItem[];
  parameters: {
    epsilon: string;
    seats: number;
    optionCount: number;
    /** The draw rule in plain words, e.g. "permute-and-flip". */
    ruleName: string;
    neighbourName: string;
    neighbourMeans: string;
    howVoted: { epsilon: string; factorAtMost: number };
    whetherVoted: { epsilon: string; factorAtMost: number } | null;
  };
}

export interface ResultPageView {
  id: string;
  title: string;
  description: string;
  resultsUrl: string;
  window: VotingWindow;
  opensAt: ShownTime;
  closesAt: ShownTime;
  closedAt: ShownTime | null;
  publishedAt: ShownTime | null;
  tallied: boolean;
  /** When a drawn result becomes public at the latest (every draw is published). */
  publishDueAt: ShownTime | null;
  /** Before publication there is no statement yet, so the page carries the general caution. */
  caution: string;
  timeline: TimelineEntry[];
  /** Present only once the organiser has published; a tallied result is still a private preview. */
  result: PublishedResultView | null;
}

const ORDINALS = ['1st', '2nd', '3rd'];
export const ordinal = (n: number): string => (n <= 3 ? ORDINALS[n - 1]! : `${n}th`);

function meaningOf(winners: string[], seats: number, noBallots: boolean): string {
  if (noBallots) return 'No ballots were cast, so nothing was counted and no winner was drawn. The page shows that nobody voted, and nothing more.';
  const nobody = 'Nobody, the organiser included, was shown how many approvals any option received.';
  if (seats === 1) {
    return (
      `${winners[0]} was drawn by a lottery weighted toward the options more members approved. ` +
      `That makes it likely, though not certain, that ${winners[0]} was among the most approved. ${nobody}`
    );
  }
  return (
    `These ${seats} options were drawn one at a time, each by a lottery weighted toward the options more members approved, ` +
    `among those not drawn yet. That makes it likely, though not certain, that they were among the most approved; ` +
    `the order they were drawn in says nothing about which had more approvals. ${nobody}`
  );
}

/**
 * The chart on the result page, from the mechanism's data-free bounds for this election's ε, options,
 * seats and neighbour relation (Dwork & Roth 2014, §3.4): it depends on no count, so showing it costs no privacy.
 */
const resultChart = memoised(resultChartOf, (s) => JSON.stringify([s.epsilon, s.optionLabels.length, s.seats, s.neighbour, s.mechanism]));

function resultChartOf(s: {
  epsilon: string;
  optionLabels: string[];
  seats: number;
  neighbour: 'replace-one' | 'add-remove';
  mechanism: StatementMechanism;
}): ResultChart | null {
  let draw;
  try {
    const rule = ruleOfStatementMechanism(s.mechanism).id;
    draw = makeDraw({ epsilon: s.epsilon, options: s.optionLabels.length, seats: s.seats, neighbour: s.neighbour, rule });
  } catch {
    return null; // a stored statement always passed these checks; without them there is nothing honest to draw
  }
  const b = draw.bounds(0.05);
  const m95 = b.marginFor['0.95'];
  const who = s.seats === 1 ? 'the most approved option' : 'the most approved option still in play';
  const chart = marginChart(b.marginTable, m95, {
    title: `Lead needed against the chance that ${who} is drawn${s.seats === 1 ? '' : ', for each seat'}`,
    desc:
      `For ε = ${draw.epsilon.text}, ${s.optionLabels.length} options and ${s.seats} ${s.seats === 1 ? 'seat' : 'seats'}: ` +
      `with a lead of ${m95} ${m95 === 1 ? 'approval' : 'approvals'} over every other option the chance is at least 95%; with ${b.marginFor['0.99']} it is at least 99%.`,
  });
  return {
    chart,
    rows: marginRows(b.marginTable, [b.marginFor['0.9'], m95, b.marginFor['0.99']]),
    caption: `Minimum chance that ${who} is drawn${s.seats === 1 ? '' : ' for a seat'}, by how far it leads every other option. The dashed lines mark 95%. These figures follow from the settings alone, not from any count.`,
  };
}

/** Published results never change, so their view is made once per stored result (memo.ts). */
export const publishedResultView = memoised(
  publishedResultViewOf,
  (stored: unknown, electorate: Electorate) => `${electorate} ${JSON.stringify(stored)}`,
  100,
);

/** Who voted: a roster (codes mailed by the site) or printed codes; what the operator can see differs (describeParties). */
type Electorate = 'roster' | 'printed';

function publishedResultViewOf(stored: unknown, electorate: Electorate): PublishedResultView {
  const { statement } = storedResult.parse(stored);
  const text = describeStatement(statement as unknown as PrivacyStatement);
  const neighbour = NEIGHBOURS[statement.neighbour];
  const noBallots = statement.outcome === 'no-ballots';
  const seats = statement.seats;
  const drawnAs = (label: string): string | null => {
    const at = statement.winners.indexOf(label);
    if (at < 0) return null;
    return seats === 1 ? 'Drawn' : `Drawn ${ordinal(at + 1)}`;
  };
  const privacy = makeExponentialDraw({
    epsilon: statement.epsilon,
    options: statement.optionLabels.length,
    seats,
    neighbour: statement.neighbour,
  }).privacy;
  return {
    headline: text.headline,
    parties: describeParties(privacy, {
      neighbour: statement.neighbour,
      publishTurnout: statement.turnout !== null,
      previewHours: 48,
      electorate,
      ...(statement.replacements === undefined ? {} : { replacements: statement.replacements }),
    }),
    meaning: meaningOf(statement.winners, seats, noBallots),
    orderNote:
      seats > 1 && !noBallots
        ? 'Listed in the order they were drawn. This order is not a ranking: the option drawn first did not necessarily have more approvals than the others.'
        : null,
    winnersHeading: seats === 1 ? 'The winner' : `The ${seats} options drawn, in draw order`,
    winnerEntries: statement.winners.map((label, i) => ({ order: seats === 1 ? '' : `Drawn ${ordinal(i + 1)}`, label })),
    options: statement.optionLabels.map((label) => ({ label, drawn: drawnAs(label) })),
    chart: noBallots ? null : resultChart(statement),
    paragraphs: text.paragraphs,
    boundsSentence: text.boundsSentence,
    caution: text.caution,
    noBallots,
    winners: statement.winners,
    turnout: statement.turnout,
    quorum: statement.quorum ? { met: statement.quorum.met, ...quorumSentences(statement.quorum) } : null,
    released: text.released,
    parameters: {
      epsilon: statement.epsilon,
      seats: statement.seats,
      optionCount: statement.optionLabels.length,
      ruleName: ruleOfStatementMechanism(statement.mechanism).name,
      neighbourName: neighbour.name,
      neighbourMeans: neighbour.means,
      howVoted: statement.protects.howVoted,
      whetherVoted: statement.protects.whetherVoted,
    },
  };
}

/**
 * The electorate kind of a drawn election. Publication lets its roster be deleted (the roster id is then
 * null), but a draw charged per member never has a member group, while a printed-code draw always gets
 * one (elections/signDraw.ts), so the group tells them apart.
 */
function electorateOf(e: Election): Electorate {
  return e.rosterId !== null || e.groupId === null ? 'roster' : 'printed';
}

export function resultPageView(e: Election, events: readonly AuditRow[], now: Date): ResultPageView {
  const published = e.state === 'published';
  const closedAt = votingTimes(e, now).closed;
  return {
    id: e.id,
    title: e.title,
    description: e.description,
    resultsUrl: `/results/${e.id}`,
    window: votingWindow(e, now),
    opensAt: shownTime(e.opensAt, e.timeZone),
    closesAt: shownTime(e.closesAt, e.timeZone),
    closedAt: closedAt ? shownTime(closedAt, e.timeZone) : null,
    publishedAt: published && e.publishedAt ? shownTime(e.publishedAt, e.timeZone) : null,
    tallied: e.state === 'tallied' && !resultHidden(e, now),
    publishDueAt: e.state === 'tallied' && !resultHidden(e, now) && e.publishDueAt ? shownTime(e.publishDueAt, e.timeZone) : null,
    caution: DRAW_CAUTION,
    timeline: timelineView(events, e, now),
    result: published ? publishedResultView(e.result, electorateOf(e)) : null,
  };
}
