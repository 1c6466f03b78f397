import type { Rational } from './rational.ts';
import { uniformBelow, type RandomSource } from './random.ts';

/**
 * Bernoulli(p) for rational p = num/den, exactly: U uniform below den, success
 * iff U < num, so P(success) = num/den with no rounding anywhere.
 */
export function bernoulliRational(num: bigint, den: bigint, random: RandomSource): boolean {
  if (typeof num !== 'bigint' || typeof den !== 'bigint' || den < 1n || num < 0n || num > den) {
    throw new RangeError('bernoulliRational needs integers with 0 ≤ num ≤ den and den ≥ 1');
  }
  if (num === 0n) return false;
  if (num === den) return true;
  return uniformBelow(den, random) < num;
}

/**
 * Bernoulli(exp(−γ)) for 0 ≤ γ = num/den ≤ 1 (Canonne, Kamath & Steinke 2020,
 * Algorithm 1, first case): S counts successes of Bernoulli(γ/k) for k = 1, 2, …
 * until the first failure; P(S ≥ j) = γ^j/j!, hence P(S even) = Σ (−γ)^j/j! = e^(−γ).
 * Below, k = S + 1 when the loop ends, so "S even" is "k odd".
 */
function bernoulliExpMinusAtMostOne(num: bigint, den: bigint, random: RandomSource): boolean {
  let k = 1n;
  while (bernoulliRational(num, den * k, random)) k += 1n;
  return k % 2n === 1n;
}

/**
 * Bernoulli(exp(−γ)) for any rational γ ≥ 0 (Canonne, Kamath & Steinke 2020,
 * Algorithm 1, second case): exp(−γ) = exp(−1)^⌊γ⌋ · exp(−(γ − ⌊γ⌋)), each factor an
 * independent exact coin; the first failing coin ends the test. Each exp(−1) coin
 * fails with probability 1 − 1/e ≈ 0.63, so the expected work is bounded by a
 * constant however large γ is.
 */
export function bernoulliExpMinus(gamma: Rational, random: RandomSource): boolean {
  const { num, den } = gamma;
  if (typeof num !== 'bigint' || typeof den !== 'bigint' || den < 1n || num < 0n) {
    throw new RangeError('bernoulliExpMinus needs a rational γ = num/den ≥ 0 with den ≥ 1');
  }
  return bernoulliExpMinusSplit(num / den, num % den, den, random);
}

/**
 * The same coin with γ given as whole + rest/den (0 ≤ rest < den), so a caller
 * that tests one γ many times splits it once.
 */
export function bernoulliExpMinusSplit(whole: bigint, rest: bigint, den: bigint, random: RandomSource): boolean {
  for (let i = 0n; i < whole; i += 1n) {
    if (!bernoulliExpMinusAtMostOne(1n, 1n, random)) return false;
  }
  return rest === 0n || bernoulliExpMinusAtMostOne(rest, den, random);
}
