import { decimalWithPrecision } from './decimal.ts';
import type { Bounds } from './bounds.ts';
import type { ExponentialDraw, Neighbour } from './draw.ts';
import { InvalidMechanismConfig } from './errors.ts';
import { sumEpsilons } from './ledger.ts';
import { planLiveTurnout } from './liveTurnout.ts';
import { rationalToText } from './rational.ts';
import { ruleModule, type StatementMechanism, type StatementSampler } from './rules/index.ts';

/** One privacy guarantee: ε and the factor e^ε it bounds, rounded up (never understated). */
export interface Protection {
  epsilon: string;
  factorAtMost: number;
}

export type Released = 'winners' | 'option-labels' | 'epsilon' | 'bounds' | 'turnout' | 'live-turnout' | 'quorum-met';
export type NotReleased = 'approval-counts' | 'ballots' | 'turnout';

/**
 * What a result page or a signature covers. Data only: every sentence a member
 * reads is produced from it by describeStatement, so pages never invent wording.
 * Bump statementVersion whenever a field changes meaning.
 */
export interface PrivacyStatement {
  statementVersion: 1;
  electionTitle: string | null;
  outcome: 'winners' | 'no-ballots';
  /** Option labels in seat order; empty when no ballots were cast. */
  winners: string[];
  optionLabels: string[];
  /** The draw rule for each seat, by its statement name (src/mechanism/rules/); all are exact and share ε and peeling. */
  mechanism: StatementMechanism;
  sampler: StatementSampler;
  scoreFunction: 'approval-count';
  sensitivity: number;
  epsilon: string;
  neighbour: Neighbour;
  protects: {
    howVoted: Protection;
    /** null when turnout is published: an exact turnout shows how many members voted. */
    whetherVoted: Protection | null;
  };
  seats: number;
  composition: 'single-draw' | 'basic';
  perRoundEpsilon: string;
  perRoundScale: string;
  bounds: Bounds;
  released: Released[];
  notReleased: NotReleased[];
  /** Exact and not protected when present; null when the organiser chose not to publish it. */
  turnout: number | null;
  /**
   * Roster elections only: replacement codes sent (describeReplacements.ts). Each such member
   * could hold two working codes; absent for printed codes and for results drawn before replacements.
   */
  replacements?: number;
  /**
   * Only when a live turnout was on: its ε (included in protects.whetherVoted) and how many noisy
   * releases it made while voting ran. Absent otherwise, and in results drawn before it existed.
   */
  liveTurnout?: { epsilon: string; releases: number };
  /** Only when a bylaw quorum was set: the minimum and the one exact, unprotected bit. */
  quorum?: { minimum: number; met: boolean };
}

const Decimal = decimalWithPrecision(40);

export function factorAtMost(epsilonText: string): number {
  return Decimal.exp(epsilonText).plus('1e-30').toDecimalPlaces(2, Decimal.ROUND_CEIL).toNumber();
}

function checkLabels(labels: unknown, options: number): string[] {
  if (!Array.isArray(labels) || labels.length !== options) {
    throw new InvalidMechanismConfig(`expected ${options} option labels`);
  }
  const seen = new Set<string>();
  for (const label of labels) {
    if (typeof label !== 'string' || label.trim() === '' || label.length > 200) {
      throw new InvalidMechanismConfig('every option label must be non-empty text of at most 200 characters');
    }
    if (seen.has(label)) throw new InvalidMechanismConfig(`option label "${label.slice(0, 40)}" appears twice`);
    seen.add(label);
  }
  return [...labels] as string[];
}

function checkWinners(winners: unknown, draw: ExponentialDraw): number[] | null {
  if (winners === null) return null;
  if (!Array.isArray(winners) || winners.length !== draw.seats) {
    throw new InvalidMechanismConfig(`expected ${draw.seats} winners, one per seat`);
  }
  const ok = winners.every((w) => Number.isInteger(w) && w >= 0 && w < draw.options);
  if (!ok || new Set(winners).size !== winners.length) {
    throw new InvalidMechanismConfig('winners must be distinct option numbers');
  }
  return winners as number[];
}

function checkTurnout(turnout: unknown, winners: number[] | null): number | null {
  if (turnout === null) return null;
  if (!Number.isSafeInteger(turnout) || (turnout as number) < 0) {
    throw new InvalidMechanismConfig('turnout must be a whole number ≥ 0, or null when it is not published');
  }
  if ((winners === null) !== (turnout === 0)) {
    throw new InvalidMechanismConfig('turnout 0 goes with "no ballots cast" and only with it');
  }
  return turnout as number;
}

export function buildStatement(input: {
  draw: ExponentialDraw;
  optionLabels: string[];
  winners: number[] | null;
  turnout: number | null;
  electionTitle?: string;
  replacements?: number;
  /** The live turnout's settings when it was on (its ε is added to whether a member voted). */
  liveTurnout?: { epsilon: string; releases: number } | null;
  /** The bylaw quorum when one was set, and the ballots counted. */
  quorum?: { minimum: number; ballots: number } | null;
}): PrivacyStatement {
  const { draw } = input;
  const labels = checkLabels(input.optionLabels, draw.options);
  const winners = checkWinners(input.winners, draw);
  const turnout = checkTurnout(input.turnout, winners);
  const title = input.electionTitle;
  if (title !== undefined && (typeof title !== 'string' || title.length > 200)) {
    throw new InvalidMechanismConfig('the election title must be text of at most 200 characters');
  }
  const published = turnout !== null;
  const rule = ruleModule(draw.rule);
  const live = input.liveTurnout ? planLiveTurnout(input.liveTurnout.releases, input.liveTurnout.epsilon) : null;
  const whetherVoted = live ? sumEpsilons([draw.privacy.whetherVoted, live.epsilon.text]) : draw.privacy.whetherVoted;
  const quorum = input.quorum ? checkQuorum(input.quorum, winners, turnout) : null;
  return {
    statementVersion: 1,
    electionTitle: title?.trim() ? title.trim() : null,
    outcome: winners === null ? 'no-ballots' : 'winners',
    winners: winners === null ? [] : winners.map((i) => labels[i] as string),
    optionLabels: labels,
    mechanism: rule.statementMechanism,
    sampler: rule.sampler,
    scoreFunction: 'approval-count',
    sensitivity: draw.sensitivity,
    epsilon: draw.epsilon.text,
    neighbour: draw.neighbour,
    protects: {
      howVoted: { epsilon: draw.privacy.howVoted, factorAtMost: factorAtMost(draw.privacy.howVoted) },
      whetherVoted: published ? null : { epsilon: whetherVoted, factorAtMost: factorAtMost(whetherVoted) },
    },
    seats: draw.seats,
    composition: draw.privacy.composition,
    perRoundEpsilon: draw.privacy.perRoundEpsilon,
    perRoundScale: rationalToText(draw.perRoundScale),
    bounds: draw.bounds(0.05),
    released: [
      'winners',
      'option-labels',
      'epsilon',
      'bounds',
      ...(published ? (['turnout'] as const) : []),
      ...(live ? (['live-turnout'] as const) : []),
      ...(quorum ? (['quorum-met'] as const) : []),
    ],
    notReleased: ['approval-counts', 'ballots', ...(published ? [] : (['turnout'] as const))],
    turnout,
    ...(input.replacements === undefined ? {} : { replacements: checkReplacements(input.replacements) }),
    ...(live ? { liveTurnout: { epsilon: live.epsilon.text, releases: live.releases } } : {}),
    ...(quorum ? { quorum } : {}),
  };
}

function checkQuorum(q: { minimum: number; ballots: number }, winners: number[] | null, turnout: number | null): { minimum: number; met: boolean } {
  if (!Number.isSafeInteger(q.minimum) || q.minimum < 1) throw new InvalidMechanismConfig('a quorum must be a whole number of ballots ≥ 1');
  if (!Number.isSafeInteger(q.ballots) || q.ballots < 0) throw new InvalidMechanismConfig('the ballots counted must be a whole number ≥ 0');
  if ((winners === null) !== (q.ballots === 0))
    throw new InvalidMechanismConfig('the ballots counted for the quorum must be 0 exactly when no ballots were cast');
  if (turnout !== null && turnout !== q.ballots) throw new InvalidMechanismConfig('the ballots counted for the quorum must be the published turnout');
  return { minimum: q.minimum, met: q.ballots >= q.minimum };
}

function checkReplacements(n: unknown): number {
  if (!Number.isSafeInteger(n) || (n as number) < 0) throw new InvalidMechanismConfig('replacements must be a whole number ≥ 0');
  return n as number;
}
