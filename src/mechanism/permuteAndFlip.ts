import { bernoulliExpMinusSplit } from './bernoulli.ts';
import type { Rational } from './rational.ts';
import { uniformBelowSmall, type RandomSource } from './random.ts';

/**
 * One round of permute-and-flip (McKenna & Sheldon 2020, Algorithm 1) over the
 * candidates still in play: visit the candidates in a uniformly random order and
 * flip, for each in turn, a coin with P(heads) = exp(−a·(m − sᵢ)), m = max sᵢ; the
 * first heads wins. With a = ε/(2Δ) it is ε-DP (McKenna & Sheldon 2020, Thm. 1; theorem number from memory),
 * the same scale as the exponential mechanism. It is the same law as
 * report-noisy-max with exponential noise of scale 1/a (Ding, Kifer et al. 2021).
 *
 * Exact: the order is a Fisher–Yates shuffle drawn lazily (step t picks uniformly
 * among the n − t candidates not yet visited with the rejection-sampled
 * uniformBelowSmall, then swaps it into place; the visited prefix has the law of a
 * full Fisher–Yates prefix, and the candidates after the winner are never needed),
 * and every coin is the exact Bernoulli(exp(−γ)) of Canonne, Kamath & Steinke 2020
 * with γ = a·(m − sᵢ) a BigInt rational. No float decides anything.
 *
 * Bounded: a candidate at the maximum has γ = 0 and its coin is heads with
 * probability 1 (no randomness used), so a round ends within n coins.
 * The number of coins still depends on the scores (a timing side channel in
 * principle), as for the exponential sampler; run it once, at tally time.
 */
export function permuteAndFlipRound(
  scores: readonly number[],
  candidates: readonly number[],
  scale: Rational,
  random: RandomSource,
): number {
  const n = candidates.length;
  if (n === 0) throw new RangeError('permuteAndFlipRound needs at least one candidate');
  let max = 0;
  for (const i of candidates) max = Math.max(max, scores[i] ?? 0);
  const top = BigInt(max);
  const order = [...candidates];
  for (let t = 0; t < n; t += 1) {
    const j = t + uniformBelowSmall(n - t, random);
    const picked = order[j] as number;
    order[j] = order[t] as number;
    order[t] = picked;
    const gammaNum = scale.num * (top - BigInt(scores[picked] as number));
    if (bernoulliExpMinusSplit(gammaNum / scale.den, gammaNum % scale.den, scale.den, random)) return picked;
  }
  // Unreachable: the candidate at the maximum has γ = 0, and that coin always succeeds.
  throw new Error('permute-and-flip visited every candidate without a success');
}

/** k seats by peeling, as for the exponential mechanism: each round at the per-round scale. */
export function permuteAndFlipSeats(
  scores: readonly number[],
  seats: number,
  scale: Rational,
  random: RandomSource,
): number[] {
  const remaining = scores.map((_, i) => i);
  const winners: number[] = [];
  for (let round = 0; round < seats; round += 1) {
    const winner = permuteAndFlipRound(scores, remaining, scale, random);
    winners.push(winner);
    remaining.splice(remaining.indexOf(winner), 1);
  }
  return winners;
}

/**
 * First-seat probabilities of permute-and-flip in floating point, for planning
 * displays and reports only (never to decide an outcome).
 *
 * With pᵢ = exp(−a(m − sᵢ)) and qᵢ = 1 − pᵢ, option i wins iff it is reached and its
 * coin succeeds. In a uniformly random order the set of options before i has a
 * uniformly random size t ∈ {0, …, n−1} and, given t, is a uniformly random t-subset
 * of the others, so
 *   P(i) = pᵢ · (1/n) Σₜ eₜ(q₋ᵢ) / C(n−1, t),
 * eₜ the elementary symmetric polynomial. We carry Eₜ = eₜ/C(·, t) directly,
 * E⁽ʲ⁾ₜ = ((j−t)/j)·E⁽ʲ⁻¹⁾ₜ + (t/j)·q·E⁽ʲ⁻¹⁾ₜ₋₁, a convex combination of numbers in
 * [0, 1]: no cancellation, no overflow. O(n³) in all; callers keep n modest
 * (see PF_EXACT_MAX_OPTIONS).
 */
export const PF_EXACT_MAX_OPTIONS = 200;

export function permuteAndFlipProbabilities(scores: readonly number[], scaleValue: number): number[] {
  const n = scores.length;
  const max = Math.max(...scores);
  const p = scores.map((s) => Math.exp(scaleValue * (s - max)));
  return p.map((pi, i) => {
    if (pi === 0) return 0;
    let e = [1];
    let j = 0;
    for (let k = 0; k < n; k += 1) {
      if (k === i) continue;
      j += 1;
      const q = 1 - (p[k] as number);
      const next = new Array<number>(j + 1);
      for (let t = 0; t <= j; t += 1) {
        const keep = t < j ? ((j - t) / j) * (e[t] as number) : 0;
        const add = t > 0 ? (t / j) * q * (e[t - 1] as number) : 0;
        next[t] = keep + add;
      }
      e = next;
    }
    return (pi * e.reduce((x, y) => x + y, 0)) / n;
  });
}
