import { z } from 'zod';
import type { AuditRow } from '../../elections/audit.ts';
import type { Election } from '../../elections/electionRepo.ts';
import { resultHidden } from '../../elections/status.ts';
import { RULE_NAMES, describeStatement, type PrivacyStatement } from '../../mechanism/index.ts';
import { DRAW_CAUTION, votingWindow, type VotingWindow } from './ballot.ts';
import { shownTime, type ShownTime } from './publicTime.ts';

/**
 * The public result page's view model. Every sentence about the draw and its privacy comes
 * from the stored statement through describeStatement; this file only picks fields to show.
 */
const protection = z.object({ epsilon: z.string(), factorAtMost: z.number() });
const statementShape = z
  .object({
    statementVersion: z.literal(1),
    mechanism: z.enum(['exponential-mechanism', 'permute-and-flip']),
    outcome: z.enum(['winners', 'no-ballots']),
    winners: z.array(z.string()),
    optionLabels: z.array(z.string()),
    epsilon: z.string(),
    neighbour: z.enum(['replace-one', 'add-remove']),
    seats: z.number().int().min(1),
    protects: z.object({ howVoted: protection, whetherVoted: protection.nullable() }),
    turnout: z.number().int().min(0).nullable(),
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

const TIMELINE: Record<string, string> = {
  created: 'Election set up',
  opened: 'Voting opened',
  closed: 'Voting closed',
  tallied: 'Drawn: sealed ballots counted and the winners drawn (the result is public by the deadline below)',
  published: 'Result published',
  shredded: 'Sealed ballots and the tally key destroyed',
};

export interface TimelineEntry {
  label: string;
  at: ShownTime;
}

export interface PublishedResultView {
  headline: string;
  paragraphs: string[];
  boundsSentence: string;
  caution: string;
  noBallots: boolean;
  winners: string[];
  turnout: number | null;
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

export function timelineView(events: readonly AuditRow[], timeZone: string, now?: Date): TimelineEntry[] {
  // Only the action and time are shown; details are for the organiser's record. The draw is
  // stamped with the whole minute it becomes visible, so it is listed from that minute on.
  return events.filter((ev) => ev.action in TIMELINE && (now === undefined || ev.at <= now)).map((ev) => ({ label: TIMELINE[ev.action]!, at: shownTime(ev.at, timeZone) }));
}

export function publishedResultView(stored: unknown): PublishedResultView {
  const { statement } = storedResult.parse(stored);
  const text = describeStatement(statement as unknown as PrivacyStatement);
  const neighbour = NEIGHBOURS[statement.neighbour];
  return {
    headline: text.headline,
    paragraphs: text.paragraphs,
    boundsSentence: text.boundsSentence,
    caution: text.caution,
    noBallots: statement.outcome === 'no-ballots',
    winners: statement.winners,
    turnout: statement.turnout,
    parameters: {
      epsilon: statement.epsilon,
      seats: statement.seats,
      optionCount: statement.optionLabels.length,
      ruleName: RULE_NAMES[statement.mechanism === 'permute-and-flip' ? 'permute-and-flip' : 'exponential'],
      neighbourName: neighbour.name,
      neighbourMeans: neighbour.means,
      howVoted: statement.protects.howVoted,
      whetherVoted: statement.protects.whetherVoted,
    },
  };
}

export function resultPageView(e: Election, events: readonly AuditRow[], now: Date): ResultPageView {
  const published = e.state === 'published';
  const closedAt = e.closedAt ?? (votingWindow(e, now) === 'closed' ? e.closesAt : null);
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
    timeline: timelineView(events, e.timeZone, now),
    result: published ? publishedResultView(e.result) : null,
  };
}
