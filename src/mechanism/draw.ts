import { computeBounds, type Bounds } from './bounds.ts';
import { toEpsilon, type Epsilon } from './epsilon.ts';
import { InvalidMechanismConfig, InvalidScores, quoteForMessage } from './errors.ts';
import { NEIGHBOURS, SENSITIVITY, type Neighbour } from './neighbour.ts';
import { peelSeats } from './peeling.ts';
import { divideByInteger, multiplyByInteger, rational, rationalToNumber, rationalToText, type Rational } from './rational.ts';
import type { RandomSource } from './random.ts';
import { DEFAULT_DRAW_RULE, ruleModule, type DrawRule } from './rules/index.ts';

export { NEIGHBOURS, SENSITIVITY, type Neighbour };

/** Largest number of options a draw accepts; a sanity limit for approval ballots, not a mathematical one. */
export const MAX_DRAW_OPTIONS = 10_000;

export interface PrivacyCost {
  /** Total ε for the whole announcement, as entered. */
  epsilon: string;
  perRoundEpsilon: string;
  /** ε for whether a member voted at all, when turnout is not published. */
  whetherVoted: string;
  /** ε for what a member ticked. */
  howVoted: string;
  composition: 'single-draw' | 'basic';
}

/**
 * ε for whether a member voted, for a draw at `epsilon` in all under `neighbour`. Voting or not is a monotone change
 * (a ballot against none; approval counts never fall as one is added), and on monotone scores one round at scale a
 * is a-DP for either rule (test/unit/mechanism/whetherVoted.test.ts gives the argument and checks it with exact
 * ratios): k rounds at a = (ε/k)/2 compose to ε/2 under replace-one; under add-remove the scale is already a = ε/k,
 * so ε, as entered.
 */
export function whetherVotedFor(epsilon: string | Epsilon, neighbour: Neighbour): string {
  const e = toEpsilon(epsilon);
  return neighbour === 'replace-one' ? rationalToText(divideByInteger(rational(e.num, e.den), 2n)) : e.text;
}

/** A checked draw for one election's settings, under any draw rule (src/mechanism/rules/). */
export interface SeatDraw {
  readonly rule: DrawRule;
  readonly epsilon: Epsilon;
  readonly options: number;
  readonly seats: number;
  readonly neighbour: Neighbour;
  readonly sensitivity: number;
  /**
   * a for each round: (ε/k)/(2Δ) for replace-one, (ε/k)/Δ for add-remove. The exponential mechanism
   * draws i with P(i) ∝ exp(a·sᵢ); permute-and-flip flips coins exp(−a·(m − sᵢ)).
   */
  readonly perRoundScale: Rational;
  readonly privacy: PrivacyCost;
  draw(scores: readonly number[], random: RandomSource): number[];
  /**
   * First-seat probabilities in floating point, for display and reports only. Refused above the
   * rule's exactMaxOptions (for permute-and-flip they cost O(d³); PF_EXACT_MAX_OPTIONS).
   */
  exactProbabilities(scores: readonly number[]): number[];
  /** Whether exactProbabilities is computed for this many options under this rule. */
  readonly hasExactProbabilities: boolean;
  bounds(beta?: number): Bounds;
}
/** The name the exponential draw was first given; both rules share the interface. */
export type ExponentialDraw = SeatDraw;

interface DrawConfig {
  epsilon: string | Epsilon;
  options: number;
  seats: number;
  neighbour: Neighbour;
  /** Default: the exponential mechanism. */
  rule?: DrawRule;
}

function checkWholeNumber(name: string, value: unknown, min: number, max: number): number {
  if (typeof value !== 'number' || !Number.isInteger(value) || value < min || value > max) {
    throw new InvalidMechanismConfig(`${name} must be a whole number from ${min} to ${max} (got ${String(value)})`);
  }
  return value;
}

/**
 * Checked constructor: every parameter is validated here, once, so a bad ε or
 * seat count fails before any ballot is counted, never in the middle of a draw.
 */
export function makeExponentialDraw(cfg: Omit<DrawConfig, 'rule'>): SeatDraw {
  if (cfg === null || typeof cfg !== 'object') throw new InvalidMechanismConfig('mechanism settings are missing');
  return makeDraw({ ...cfg, rule: 'exponential' });
}

/** Permute-and-flip (McKenna & Sheldon 2020) at the same ε, scale and peeling as the exponential draw. */
export function makePermuteAndFlipDraw(cfg: Omit<DrawConfig, 'rule'>): SeatDraw {
  if (cfg === null || typeof cfg !== 'object') throw new InvalidMechanismConfig('mechanism settings are missing');
  return makeDraw({ ...cfg, rule: 'permute-and-flip' });
}

export function makeDraw(cfg: DrawConfig): SeatDraw {
  if (cfg === null || typeof cfg !== 'object') throw new InvalidMechanismConfig('mechanism settings are missing');
  const module = ruleModule(cfg.rule ?? DEFAULT_DRAW_RULE);
  const rule = module.id;
  const epsilon = toEpsilon(cfg.epsilon);
  const options = checkWholeNumber('the number of options', cfg.options, 2, MAX_DRAW_OPTIONS);
  const seats = checkWholeNumber('the number of seats', cfg.seats, 1, options - 1);
  const neighbour = cfg.neighbour;
  if (!NEIGHBOURS.includes(neighbour)) {
    throw new InvalidMechanismConfig(`neighbour must be "replace-one" or "add-remove" (got ${quoteForMessage(neighbour)})`);
  }
  const total = rational(epsilon.num, epsilon.den);
  const perRound = divideByInteger(total, BigInt(seats));
  // The rule's privacy cost: the scale at which one round is (ε/k)-DP (its module gives the sources).
  const perRoundScale = module.scale(perRound, neighbour);
  const perRoundEpsilon = rationalToText(perRound);
  const doubled = rationalToText(multiplyByInteger(total, 2n));
  const privacy: PrivacyCost = Object.freeze({
    epsilon: epsilon.text,
    perRoundEpsilon,
    whetherVoted: whetherVotedFor(epsilon, neighbour),
    // A changed ballot is one removal plus one addition: 2ε under add-remove.
    howVoted: neighbour === 'replace-one' ? epsilon.text : doubled,
    composition: seats === 1 ? 'single-draw' : 'basic',
  });

  const checkScores = (scores: readonly number[]): void => {
    if (!Array.isArray(scores) || scores.length !== options) {
      throw new InvalidScores(`expected ${options} scores, one per option`);
    }
    for (const s of scores) {
      if (!Number.isSafeInteger(s) || s < 0) throw new InvalidScores('every score must be a whole number ≥ 0');
    }
  };
  const hasExactProbabilities = options <= module.exactMaxOptions;

  return Object.freeze({
    rule,
    epsilon: Object.freeze({ ...epsilon }),
    options,
    seats,
    neighbour,
    sensitivity: SENSITIVITY,
    perRoundScale,
    privacy,
    hasExactProbabilities,
    draw(scores: readonly number[], random: RandomSource): number[] {
      checkScores(scores);
      if (typeof random !== 'function') throw new InvalidMechanismConfig('a random source is required');
      return peelSeats(module, scores, seats, perRoundScale, random);
    },
    exactProbabilities(scores: readonly number[]): number[] {
      checkScores(scores);
      if (!hasExactProbabilities) {
        throw new InvalidMechanismConfig(`exact ${module.name} probabilities are computed for at most ${module.exactMaxOptions} options`);
      }
      return module.exactProbabilities(scores, rationalToNumber(perRoundScale));
    },
    bounds(beta = 0.05): Bounds {
      return computeBounds(options, perRoundScale, perRoundEpsilon, beta, module);
    },
  });
}
