import { decimalWithPrecision, type Dec } from './decimal.ts';
import { InvalidMechanismConfig } from './errors.ts';
import type { Rational } from './rational.ts';
import type { DrawRule } from './rule.ts';

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

/** If the leader is ahead of all d − 1 others by ≥ m: P(leader) ≥ 1/(1 + (d − 1)·e^(−a·m)). */
function leaderProbabilityExponential(d: number, a: Dec, m: number): Dec {
  return new Decimal(1).div(new Decimal(d - 1).times(Decimal.exp(a.times(m).neg())).plus(1));
}

/**
 * Permute-and-flip, leader ahead of all d − 1 others by ≥ m, x = e^(−a·m):
 * P(leader) ≥ (1/d)·Σ_{t=0}^{d−1} (1 − x)^t = (1 − (1 − x)^d)/(d·x).
 * Proof (ours, from McKenna & Sheldon 2020, Algorithm 1): the leader's coin always succeeds, so
 * it is drawn iff every option visited before it fails; each of those fails with probability
 * ≥ 1 − x, independently, and the number visited before the leader is uniform on {0, …, d − 1}.
 * Equality when the others are tied exactly m below. It is never below the exponential
 * mechanism's bound: on that two-level profile the expected shortfall is m·(1 − P(leader)), and
 * McKenna & Sheldon 2020 prove permute-and-flip's expected shortfall never exceeds the exponential
 * mechanism's (abstract; the theorem number, Thm. 2, is from memory). Also checked on a grid in
 * test/unit/mechanism/permuteAndFlip.test.ts.
 */
function leaderProbabilityPermuteAndFlip(d: number, a: Dec, m: number): Dec {
  if (m === 0) return new Decimal(1).div(d);
  const x = Decimal.exp(a.times(m).neg());
  return new Decimal(1).minus(new Decimal(1).minus(x).pow(d)).div(x.times(d));
}

function leaderProbabilityFor(rule: DrawRule): (d: number, a: Dec, m: number) => Dec {
  return rule === 'permute-and-flip' ? leaderProbabilityPermuteAndFlip : leaderProbabilityExponential;
}

/** Smallest whole margin whose guarantee reaches p, checked directly after a closed-form first guess. */
function marginReaching(d: number, a: Dec, p: Dec, rule: DrawRule): number {
  const leaderProbability = leaderProbabilityFor(rule);
  const reaches = (m: number) => leaderProbability(d, a, m).minus(NUDGE).gte(p);
  const ratio = new Decimal(d - 1).times(p).div(new Decimal(1).minus(p));
  // The exponential mechanism's closed form; permute-and-flip never needs more (see above).
  let m = ratio.lte(1) ? 0 : Decimal.ln(ratio).div(a).ceil().toNumber();
  if (rule === 'permute-and-flip' && m > 0 && reaches(m)) {
    // The guarantee grows with m, so bisect down: the margin can be far below the first guess.
    let [lo, hi] = [-1, m];
    while (hi - lo > 1) {
      const mid = Math.floor((lo + hi) / 2);
      if (mid >= 0 && reaches(mid)) hi = mid;
      else lo = mid;
    }
    return hi;
  }
  while (m > 0 && reaches(m - 1)) m -= 1;
  while (!reaches(m)) m += 1;
  return m;
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

export function computeBounds(d: number, scale: Rational, perRoundEpsilon: string, betaInput: unknown, rule: DrawRule = 'exponential'): Bounds {
  const beta = validateBeta(betaInput);
  const leaderProbability = leaderProbabilityFor(rule);
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
    minProbability: leaderProbability(d, a, m)
      .minus(m === 0 ? 0 : NUDGE)
      .toDecimalPlaces(4, Decimal.ROUND_FLOOR)
      .toNumber(),
  }));
  return { beta, withinApprovals: within.toNumber(), perRoundEpsilon, marginTable, marginFor };
}
