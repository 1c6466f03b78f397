import type { Election } from '../../elections/electionRepo.ts';
import {
  assessElectorate,
  makeDraw,
  protectionStrength,
  WEAK_PROTECTION_EPSILON,
  type ElectorateLevel,
  type ExponentialDraw,
  type LeadChance,
} from '../../mechanism/index.ts';
import { percentDown } from './marginChart.ts';

/** Plain words around the mechanism's data-free chances (src/mechanism/electorate.ts); every number comes from there. */
export interface ElectorateWarning {
  level: ElectorateLevel;
  heading: string;
  /** Sentences with the chances for this electorate, in order. */
  facts: string[];
  message: string;
  expectedVoters: number;
}

export interface ProtectionWarning {
  heading: string;
  message: string;
}

export const plural = (n: number, one: string, many = `${one}s`): string => `${n.toLocaleString('en')} ${n === 1 ? one : many}`;

const HEADINGS: Record<ElectorateLevel, string> = {
  uncertain: 'Even a unanimous favourite may not be drawn',
  noisy: 'Chance may decide a close vote',
  clear: 'A clear lead will usually win',
};

function chanceWords(c: LeadChance, seats: number, exact: boolean): string {
  const atLeast = exact ? '' : 'at least ';
  if (seats === 1) return `is drawn ${atLeast}${percentDown(c.firstSeat)} of the time`;
  return `takes one of the ${seats} seats ${atLeast}${percentDown(c.anySeat)} of the time (the first seat ${atLeast}${percentDown(c.firstSeat)})`;
}

/** The chances for an electorate of `voters`, in numbers, with a heading by level. */
export function electorateFacts(draw: ExponentialDraw, voters: number): ElectorateWarning {
  const a = assessElectorate(draw, voters);
  const seats = draw.seats;
  const facts = [
    `If all ${plural(voters, 'voter')} approve one option and nobody approves any other, that option ${chanceWords(a.unanimous, seats, true)}.`,
    `If an option leads every other by ${plural(a.typical.lead, 'approval')} (about one voter in ten), it ${chanceWords(a.typical, seats, false)}.`,
  ];
  const message =
    a.level === 'uncertain'
      ? `A 95% chance needs a lead of ${plural(a.margin95, 'approval')}, more than there are voters, so even an option everyone approves falls short of it. A larger ε, fewer options or fewer seats would make the draw follow the approvals more closely.`
      : a.level === 'noisy'
        ? `A 95% chance needs a lead of ${plural(a.margin95, 'approval')}, more than one voter in ten, so in a close vote chance may decide who is drawn.`
        : `A lead of one voter in ten gives at least a 95% chance. The ${seats === 1 ? 'winner is' : 'winners are'} still drawn by a weighted lottery, so nothing is certain.`;
  return { level: a.level, heading: HEADINGS[a.level], facts, message, expectedVoters: voters };
}

/** A warning when how a member voted is protected at ε above WEAK_PROTECTION_EPSILON; null otherwise. */
export function protectionWarning(draw: ExponentialDraw): ProtectionWarning | null {
  const p = protectionStrength(draw);
  if (!p.weak) return null;
  return {
    heading: 'Weak privacy protection',
    message:
      `How a member voted is protected at ε = ${p.howVotedEpsilon}: one member’s ballot can make any result up to about ${p.factor.toLocaleString('en')} times more or less likely. ` +
      `Someone who already knows how most others voted could often tell from the result how that member voted. ` +
      `We suggest an ε of ${WEAK_PROTECTION_EPSILON} or less for how members voted.`,
  };
}

type Settings = Pick<Election, 'epsilon' | 'options' | 'seats' | 'neighbour' | 'expectedVoters'> & { rule?: Election['rule'] };

function drawOf(e: Settings): ExponentialDraw | null {
  try {
    return makeDraw({ epsilon: e.epsilon, options: e.options.length, seats: e.seats, neighbour: e.neighbour, rule: e.rule });
  } catch {
    return null; // a stored draft always passed these checks; nothing to warn about otherwise
  }
}

/** The chances for a stored election's expected electorate: shown on the dashboard and before opening. */
export function electorateWarning(e: Settings): ElectorateWarning | null {
  if (e.expectedVoters === null || e.expectedVoters < 1) return null;
  const draw = drawOf(e);
  return draw ? electorateFacts(draw, e.expectedVoters) : null;
}

export interface DrawWarning extends ElectorateWarning {
  className: string;
  /** Which electorate the numbers are for, and why. */
  basis: string;
}

/**
 * Before the draw: the chances again, for the turnout the organiser may see when there is one, else for the
 * expected electorate, saying which. `turnout` is null when the organiser is shown no count.
 */
export function drawWarning(e: Settings, turnout: number | null): DrawWarning | null {
  const draw = drawOf(e);
  if (!draw) return null;
  const expected = e.expectedVoters !== null && e.expectedVoters >= 1 ? e.expectedVoters : null;
  if (turnout !== null && turnout >= 1) {
    const w = electorateFacts(draw, turnout);
    const farBelow = expected !== null && turnout * 2 <= expected;
    return {
      ...w,
      heading: farBelow ? `Turnout is far below the ${plural(expected, 'voter')} you expected` : w.heading,
      basis: `These figures are for the ${plural(turnout, 'ballot')} cast${farBelow ? `, not the ${plural(expected, 'voter')} you expected` : ''}.`,
      className: noticeClass(farBelow && w.level === 'clear' ? 'noisy' : w.level),
    };
  }
  if (expected === null) return null;
  const w = electorateFacts(draw, expected);
  return {
    ...w,
    basis: `You are not shown the turnout before the draw, so these figures are for the ${plural(expected, 'voter')} you expected. If fewer voted, chance plays a larger part.`,
    className: noticeClass(w.level),
  };
}

export function noticeClass(level: ElectorateLevel): string {
  return level === 'uncertain' ? 'notice notice-warn' : level === 'noisy' ? 'notice' : 'notice notice-good';
}
