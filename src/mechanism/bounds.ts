import { decimalWithPrecision, type Dec } from './decimal.ts';
import { InvalidMechanismConfig } from './errors.ts';
import type { Rational } from './rational.ts';
import type { DrawRuleModule } from './rules/rule.ts';

/**
 * Guarantees that depend only on ε, d and k, never on ballots, so publishing
 * them costs no privacy. Probabilities are rounded down and margins up, so a
 * printed figure never promises more than the mathematics gives.
 */
export interface Bounds {
  beta: number;
  /** With probability ≥ 1 − β, each seat's winner has ≥ (top approvals among options still in play) − withinApprovals. */
  withinApprovals: number;
  perRoundEpsilon: string;
  /**
   * minProbability: P(leader drawn for the seat) when it leads every other option by ≥ margin approvals.
   * Every margin from 0 up to the one reaching 99.9% when that is at most 100 rows; beyond that, evenly
   * spaced margins plus the exact 90/95/99/99.9% margins, so the table stays readable.
   */
  marginTable: { margin: number; minProbability: number }[];
  marginFor: { '0.9': number; '0.95': number; '0.99': number };
}

// 60 significant digits; the safety nudge below dwarfs the rounding error of ln and exp.
const Decimal = decimalWithPrecision(60);
const NUDGE = new Decimal('1e-40');
const MAX_TABLE_ROWS = 100;

/**
 * Dwork & Roth 2014, Cor. 3.12, for P(i) ∝ exp(a·sᵢ) over d options: OPT − (1/a)(ln d + ln(1/β)).
 * The same margin holds for permute-and-flip, by the argument of D&R Thm. 3.11: under either rule
 * P(option r drawn) ≤ exp(−a·(OPT − s_r)) (for permute-and-flip, r needs its own coin, which
 * succeeds with exactly that probability; McKenna & Sheldon 2020, Algorithm 1), so
 * P(shortfall ≥ T) ≤ (d − 1)·e^(−aT) ≤ β at T = (1/a)(ln d + ln(1/β)).
 */
function accuracyMargin(d: number, a: Dec, beta: Dec): Dec {
  return Decimal.ln(d)
    .plus(Decimal.ln(new Decimal(1).div(beta)))
    .div(a);
}

/**
 * Smallest whole margin m ≥ 0 whose leader bound (the rule's leaderChance, which grows with m) reaches p,
 * found from the rule's first guess: down or up in doubling steps, then by bisection. For the exponential
 * mechanism the guess is its closed form and two evaluations settle it; for a rule whose guess is far
 * too high, such as permute-and-flip's (the exponential closed form), the search takes O(log m) steps.
 */
function marginReaching(d: number, a: Dec, p: Dec, rule: LeaderBound): number {
  const reaches = (m: number) => rule.leaderChance(d, a, m).minus(NUDGE).gte(p);
  const guess = rule.marginGuess(d, a, p);
  // lo never reaches p (−1 stands for "below every margin"), hi always does.
  let lo: number;
  let hi: number;
  if (reaches(guess)) {
    hi = guess;
    lo = guess - 1;
    for (let step = 2; lo >= 0 && reaches(lo); step *= 2) [hi, lo] = [lo, Math.max(-1, lo - step)];
  } else {
    lo = guess;
    hi = guess + 1;
    for (let step = 2; !reaches(hi); step *= 2) [lo, hi] = [hi, hi + step];
  }
  while (hi - lo > 1) {
    const mid = Math.floor((lo + hi) / 2);
    if (reaches(mid)) hi = mid;
    else lo = mid;
  }
  return hi;
}

function tableMargins(upTo: number, marked: number[]): number[] {
  if (upTo <= MAX_TABLE_ROWS) return Array.from({ length: upTo + 1 }, (_, m) => m);
  let step = 1;
  for (let unit = 1; upTo / step > MAX_TABLE_ROWS; unit *= 10) {
    step = [unit, 2 * unit, 5 * unit].find((s) => upTo / s <= MAX_TABLE_ROWS) ?? 10 * unit;
  }
  const margins = new Set<number>(marked);
  for (let m = 0; m < upTo; m += step) margins.add(m);
  margins.add(upTo);
  return [...margins].sort((x, y) => x - y);
}

export function validateBeta(beta: unknown): number {
  if (typeof beta !== 'number' || !Number.isFinite(beta) || beta <= 0 || beta >= 1) {
    throw new InvalidMechanismConfig('beta must be a number strictly between 0 and 1, such as 0.05');
  }
  return beta;
}

/** The part of a draw rule the bounds read (src/mechanism/rules/rule.ts). */
type LeaderBound = Pick<DrawRuleModule, 'leaderChance' | 'marginGuess'>;

export function computeBounds(d: number, scale: Rational, perRoundEpsilon: string, betaInput: unknown, rule: LeaderBound): Bounds {
  const beta = validateBeta(betaInput);
  const a = new Decimal(scale.num.toString()).div(scale.den.toString());
  const within = accuracyMargin(d, a, new Decimal(beta)).plus(NUDGE).toDecimalPlaces(2, Decimal.ROUND_CEIL);
  const marginFor = {
    '0.9': marginReaching(d, a, new Decimal('0.9'), rule),
    '0.95': marginReaching(d, a, new Decimal('0.95'), rule),
    '0.99': marginReaching(d, a, new Decimal('0.99'), rule),
  };
  const last = marginReaching(d, a, new Decimal('0.999'), rule);
  const marginTable = tableMargins(last, [marginFor['0.9'], marginFor['0.95'], marginFor['0.99']]).map((m) => ({
    margin: m,
    // At m = 0 the bound is exactly 1/d, so it needs no nudge before rounding down.
    minProbability: rule
      .leaderChance(d, a, m)
      .minus(m === 0 ? 0 : NUDGE)
      .toDecimalPlaces(4, Decimal.ROUND_FLOOR)
      .toNumber(),
  }));
  return { beta, withinApprovals: within.toNumber(), perRoundEpsilon, marginTable, marginFor };
}
