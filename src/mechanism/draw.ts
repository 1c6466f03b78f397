import { computeBounds, type Bounds } from './bounds.ts';
import { toEpsilon, type Epsilon } from './epsilon.ts';
import { InvalidMechanismConfig, InvalidScores, quoteForMessage } from './errors.ts';
import { drawSeats, firstSeatProbabilities } from './exponential.ts';
import { PF_EXACT_MAX_OPTIONS, permuteAndFlipProbabilities, permuteAndFlipSeats } from './permuteAndFlip.ts';
import { divideByInteger, multiplyByInteger, rational, rationalToNumber, rationalToText, type Rational } from './rational.ts';
import type { RandomSource } from './random.ts';
import { DRAW_RULES, type DrawRule } from './rule.ts';

/**
 * replace-one: one member's ballot swapped for any other (covers whether and how they voted).
 * add-remove: one ballot added or removed (covers whether they voted; how, only at 2ε).
 */
export type Neighbour = 'replace-one' | 'add-remove';
export const NEIGHBOURS: readonly Neighbour[] = ['replace-one', 'add-remove'];

/** Largest number of options we accept; a sanity limit for approval ballots, not a mathematical one. */
export const MAX_OPTIONS = 10_000;
/** Sensitivity of an approval count: one ballot moves each count by at most 1. */
export const SENSITIVITY = 1;

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

/** A checked draw for one election's settings, under either draw rule (see rule.ts). */
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
   * First-seat probabilities in floating point, for display and reports only. For
   * permute-and-flip this costs O(d³) and is refused above PF_EXACT_MAX_OPTIONS options.
   */
  exactProbabilities(scores: readonly number[]): number[];
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
  const rule = cfg.rule ?? 'exponential';
  if (!DRAW_RULES.includes(rule)) {
    throw new InvalidMechanismConfig(`the draw rule must be "exponential" or "permute-and-flip" (got ${quoteForMessage(rule)})`);
  }
  const epsilon = toEpsilon(cfg.epsilon);
  const options = checkWholeNumber('the number of options', cfg.options, 2, MAX_OPTIONS);
  const seats = checkWholeNumber('the number of seats', cfg.seats, 1, options - 1);
  const neighbour = cfg.neighbour;
  if (!NEIGHBOURS.includes(neighbour)) {
    throw new InvalidMechanismConfig(`neighbour must be "replace-one" or "add-remove" (got ${quoteForMessage(neighbour)})`);
  }
  const total = rational(epsilon.num, epsilon.den);
  const perRound = divideByInteger(total, BigInt(seats));
  // Dwork & Roth 2014, Thm. 3.10 uses ε/(2Δ). When every score can only rise as a
  // ballot is added (approval counts are monotone), ε/Δ suffices for add/remove
  // neighbours (Dwork & Roth 2014, §3.4 remark on monotone utilities; cited from memory).
  // Permute-and-flip takes the same scale: ε/(2Δ) is McKenna & Sheldon 2020, Thm. 1 (number from memory); for
  // monotone scores ε/Δ follows from its equivalence with report-noisy-max with exponential
  // noise of rate a (Ding, Kifer et al. 2021): the argument of Dwork & Roth 2014, Claim 3.9
  // (report-noisy-max on monotone counts) needs only P(Z ≥ t + 1) ≥ e^(−a)·P(Z ≥ t) for every t,
  // which exponential noise satisfies. Both scales are also checked on exact probabilities, one
  // and two seats, in test/unit/mechanism/permuteAndFlip.test.ts.
  const perRoundScale = divideByInteger(perRound, BigInt(neighbour === 'replace-one' ? 2 * SENSITIVITY : SENSITIVITY));
  const perRoundEpsilon = rationalToText(perRound);
  const doubled = rationalToText(multiplyByInteger(total, 2n));
  const privacy: PrivacyCost = Object.freeze({
    epsilon: epsilon.text,
    perRoundEpsilon,
    whetherVoted: epsilon.text,
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

  return Object.freeze({
    rule,
    epsilon: Object.freeze({ ...epsilon }),
    options,
    seats,
    neighbour,
    sensitivity: SENSITIVITY,
    perRoundScale,
    privacy,
    draw(scores: readonly number[], random: RandomSource): number[] {
      checkScores(scores);
      if (typeof random !== 'function') throw new InvalidMechanismConfig('a random source is required');
      return rule === 'permute-and-flip'
        ? permuteAndFlipSeats(scores, seats, perRoundScale, random)
        : drawSeats(scores, seats, perRoundScale, random);
    },
    exactProbabilities(scores: readonly number[]): number[] {
      checkScores(scores);
      if (rule === 'exponential') return firstSeatProbabilities(scores, rationalToNumber(perRoundScale));
      if (options > PF_EXACT_MAX_OPTIONS) {
        throw new InvalidMechanismConfig(`exact permute-and-flip probabilities are computed for at most ${PF_EXACT_MAX_OPTIONS} options`);
      }
      return permuteAndFlipProbabilities(scores, rationalToNumber(perRoundScale));
    },
    bounds(beta = 0.05): Bounds {
      return computeBounds(options, perRoundScale, perRoundEpsilon, beta, rule);
    },
  });
}
