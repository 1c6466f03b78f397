import { z } from 'zod';
import { memoised } from './memo.ts';
import type { Election } from '../../elections/electionRepo.ts';
import { InvalidBallot } from '../../elections/errors.ts';
import { drawRuleOr, ruleModule } from '../../mechanism/index.ts';
import { shownTime, type ShownTime } from './publicTime.ts';
import { votingTimes } from '../../elections/votingTimes.ts';
import { describeParties, makeExponentialDraw, type PartyText } from '../../mechanism/index.ts';

/** Members are told the longest preview the product allows; a shorter configured one only publishes sooner. */
const PREVIEW_HOURS_PROMISED = 48;

/** Where a member is in the three steps; error pages word themselves by it. */
export type VoteStep = 'code' | 'ballot' | 'confirm' | 'cast';
export type VotingWindow = 'not-yet-open' | 'open' | 'closed';

export interface BallotOptionView {
  position: number;
  label: string;
  description: string;
}

export interface VotingElectionView {
  id: string;
  title: string;
  description: string;
  seats: number;
  epsilon: string;
  options: BallotOptionView[];
  opensAt: ShownTime;
  closesAt: ShownTime;
  window: VotingWindow;
  /** When voting really ended (an early close, or the closing time once passed); null while open. */
  closedAt: ShownTime | null;
  /** The result is public: the ballot link then says so and points to it. */
  published: boolean;
  /** How to reach the organiser, as they wrote it; empty when they gave none. */
  contact: string;
  voteUrl: string;
  resultsUrl: string;
  /** Short sentences shown before voting: how the result will be drawn. */
  howDrawn: string[];
  caution: string;
  /** Two sentences of the promise, shown just under the code box; the full text follows on the same page. */
  promise: [string, string];
  /** What members, the public and the organiser can each learn: read before voting. */
  parties: PartyText[];
  /** The electorate is a roster: codes come by email, and a lost one can be replaced from the ballot page. */
  roster: boolean;
}

/** Drafts are handled before this: members never see them (they answer 404). */
export function votingWindow(e: Pick<Election, 'state' | 'opensAt' | 'closesAt'>, now: Date): VotingWindow {
  if (e.state !== 'open' && e.state !== 'draft') return 'closed';
  if (now < e.opensAt) return 'not-yet-open';
  return now < e.closesAt ? 'open' : 'closed';
}

function howDrawn(e: Election): string[] {
  const who = e.seats === 1 ? 'one winner is drawn' : `${e.seats} winners are drawn, one seat at a time,`;
  return [
    `When voting closes, ${who} at random, weighted toward the most approved options: an option that more members approve is more likely to be drawn, but not certain to be.`,
    ruleModule(drawRuleOr(e.rule)).sentence,
    `The privacy setting, written ε (epsilon, a Greek letter), is ε = ${e.epsilon}. A smaller ε protects each ballot more strongly and makes the draw more random; a larger ε makes it follow the approvals more closely.`,
    'Nobody, including the organiser, is ever shown how many approvals any option received.',
  ];
}

// The rule every caution carries (see the project's wording rules); not statement text, which comes from the mechanism.
export const DRAW_CAUTION =
  'The winner is drawn at random, weighted toward the most approved options, so it is not always the option with the most approvals. ' +
  'With few voters or a small ε, chance plays a larger part, so a less approved option may well be drawn. ' +
  'Your organisation adopted this way of choosing before the vote, in line with its bylaws and local election law.';

/** The same claims as howDrawn and the caution, shortened: nothing here that the full text does not also say. */
function promiseOf(seats: number): [string, string] {
  const drawn =
    seats === 1
      ? 'The winner is drawn at random, weighted toward the most approved options, so it is not always the option with the most approvals.'
      : `The ${seats} winners are drawn at random, weighted toward the most approved options, so they are not always the options with the most approvals.`;
  return ['Nobody, including the organiser, is ever shown how many approvals any option received.', drawn];
}

function closedAtOf(e: Election, now: Date): ShownTime | null {
  const closed = votingTimes(e, now).closed;
  return closed ? shownTime(closed, e.timeZone) : null;
}

/** Who could learn what, from the election's settings alone; made once per settings (memo.ts). */
const partiesOf = memoised(
  (
    epsilon: string,
    options: number,
    seats: number,
    neighbour: Election['neighbour'],
    publishTurnout: boolean,
    electorate: 'roster' | 'printed',
  ): PartyText[] =>
    describeParties(makeExponentialDraw({ epsilon, options, seats, neighbour }).privacy, {
      neighbour,
      publishTurnout,
      previewHours: PREVIEW_HOURS_PROMISED,
      electorate,
    }),
  (...settings) => JSON.stringify(settings),
);

export function votingElectionView(e: Election, now: Date): VotingElectionView {
  return {
    id: e.id,
    title: e.title,
    description: e.description,
    seats: e.seats,
    epsilon: e.epsilon,
    options: e.options.map((o) => ({ position: o.position, label: o.label, description: o.description })),
    opensAt: shownTime(e.opensAt, e.timeZone),
    closesAt: shownTime(e.closesAt, e.timeZone),
    window: votingWindow(e, now),
    closedAt: closedAtOf(e, now),
    published: e.state === 'published',
    contact: e.contact,
    voteUrl: `/vote/${e.id}`,
    resultsUrl: `/results/${e.id}`,
    howDrawn: howDrawn(e),
    caution: DRAW_CAUTION,
    promise: promiseOf(e.seats),
    parties: partiesOf(e.epsilon, e.options.length, e.seats, e.neighbour, e.publishTurnout, e.rosterId ? 'roster' : 'printed'),
    roster: e.rosterId !== null,
  };
}

/** Repeated form fields arrive as a string, an array of strings, or nothing (urlencoded, extended:false). */
const approveField = z.union([z.string(), z.array(z.string())]).optional();
const POSITION = /^(0|[1-9][0-9]{0,4})$/;

/**
 * The ticked positions, ascending and distinct. Anything that is not one of this
 * election's positions is InvalidBallot: an honest form can never send it.
 */
export function parseApprovals(raw: unknown, optionCount: number): number[] {
  const parsed = approveField.safeParse(raw);
  if (!parsed.success) throw new InvalidBallot();
  const values = parsed.data === undefined ? [] : Array.isArray(parsed.data) ? parsed.data : [parsed.data];
  const positions = values.map((v) => {
    if (!POSITION.test(v)) throw new InvalidBallot();
    const n = Number(v);
    if (n >= optionCount) throw new InvalidBallot();
    return n;
  });
  if (new Set(positions).size !== positions.length) throw new InvalidBallot();
  return positions.sort((a, b) => a - b);
}

/** The options a member ticked, in ballot order, for the confirmation step. */
export function tickedOptions(view: VotingElectionView, approvals: readonly number[]): BallotOptionView[] {
  const ticked = new Set(approvals);
  return view.options.filter((o) => ticked.has(o.position));
}

/** Receipts are 10 symbols; shown in two groups of five for reading aloud or copying (hyphens are ignored on input). */
export function formatReceipt(receipt: string): string {
  return receipt.length === 10 ? `${receipt.slice(0, 5)}-${receipt.slice(5)}` : receipt;
}
