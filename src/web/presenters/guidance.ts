import { makeDraw, type DrawRule } from '../../mechanism/index.ts';
import { electorateFacts, noticeClass, plural, protectionWarning, type ElectorateWarning, type ProtectionWarning } from './electorate.ts';
import { marginChart, marginRows, type MarginChart } from './marginChart.ts';

export interface GuidanceInput {
  epsilon: string;
  options: number;
  seats: number;
  neighbour: 'replace-one' | 'add-remove';
  expectedVoters: number | null;
  /** The draw rule chosen on the form; the bounds follow it. Default: the exponential mechanism. */
  rule?: DrawRule;
}

export type GuidanceView =
  | { ready: false; reason: string }
  | {
      ready: true;
      epsilon: string;
      options: number;
      seats: number;
      perSeatEpsilon: string;
      margin95: number;
      margin90: number;
      margin99: number;
      withinApprovals: number;
      howVotedEpsilon: string;
      whetherVotedEpsilon: string;
      chart: MarginChart;
      rows: { margin: number; percent: string; marked: boolean }[];
      electorate: (ElectorateWarning & { className: string }) | null;
      protection: ProtectionWarning | null;
    };

const optionWords = (n: number) => plural(n, 'option');
const seatWords = (n: number) => plural(n, 'seat');

/**
 * What the organiser sees while choosing ε: data-free bounds only (they depend on ε, options
 * and seats, never on ballots), from the mechanism's own constructor so the page and the draw agree.
 */
export function guidanceFor(input: GuidanceInput): GuidanceView {
  if (input.options < 2) return { ready: false, reason: 'Enter at least two options to see how ε affects the result.' };
  if (!Number.isInteger(input.seats) || input.seats < 1 || input.seats > input.options - 1) {
    return {
      ready: false,
      reason:
        input.options === 2
          ? 'With 2 options there is 1 seat: choose 1 to see the guidance.'
          : `Choose between 1 and ${input.options - 1} seats to see the guidance.`,
    };
  }
  let draw;
  try {
    draw = makeDraw({ epsilon: input.epsilon.trim(), options: input.options, seats: input.seats, neighbour: input.neighbour, rule: input.rule });
  } catch {
    return { ready: false, reason: 'Enter ε as a decimal from 0.01 to 10 (such as 0.5, 1 or 2.5) to see the guidance.' };
  }
  // Dwork & Roth 2014, Cor. 3.12 with β = 0.05, and the leader-probability bound, both from bounds().
  const b = draw.bounds(0.05);
  const m95 = b.marginFor['0.95'];
  const setting = `ε = ${draw.epsilon.text}, ${optionWords(input.options)}, ${seatWords(input.seats)}`;
  const first = b.marginTable[0];
  const chart = marginChart(b.marginTable, m95, {
    title: 'Lead needed against the chance that the most approved option is drawn',
    desc:
      `For ${setting}: with no lead the chance is at least ${pct(first?.minProbability ?? 0)}; ` +
      `with a lead of ${plural(m95, 'approval')} it is at least 95%; with ${b.marginFor['0.99']} it is at least 99%.`,
  });
  const electorate =
    input.expectedVoters !== null && Number.isSafeInteger(input.expectedVoters) && input.expectedVoters >= 1
      ? electorateFacts(draw, input.expectedVoters)
      : null;
  return {
    ready: true,
    epsilon: draw.epsilon.text,
    options: input.options,
    seats: input.seats,
    perSeatEpsilon: b.perRoundEpsilon,
    margin95: m95,
    margin90: b.marginFor['0.9'],
    margin99: b.marginFor['0.99'],
    withinApprovals: b.withinApprovals,
    howVotedEpsilon: draw.privacy.howVoted,
    whetherVotedEpsilon: draw.privacy.whetherVoted,
    chart,
    rows: marginRows(b.marginTable, [b.marginFor['0.9'], m95, b.marginFor['0.99']]),
    electorate: electorate ? { ...electorate, className: noticeClass(electorate.level) } : null,
    protection: protectionWarning(draw),
  };
}

const pct = (p: number) => `${Math.floor(p * 1000) / 10}%`;
