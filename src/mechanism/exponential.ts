import { bernoulliExpMinusSplit } from './bernoulli.ts';
import type { Rational } from './rational.ts';
import { uniformBelowSmall, type RandomSource } from './random.ts';

/**
 * One round of the exponential mechanism (McSherry & Talwar 2007; Dwork & Roth
 * 2014, Def. 3.4) over the candidates still in play: P(i) ∝ exp(a·sᵢ), a = scale.
 *
 * Exact rejection sampler (Canonne, Kamath & Steinke 2020, Bernoulli(exp(−γ))
 * sampler): with m = max sᵢ, repeat { i = uniform(candidates); accept with
 * probability exp(−a·(m − sᵢ)) }. One attempt returns i with probability
 * exp(−a(m − sᵢ))/n, proportional to exp(a·sᵢ), and attempts are independent, so
 * the first accepted i has exactly the target law. Ties are broken by the
 * uniform proposal alone.
 *
 * Speed, without changing the law:
 * - γᵢ = a(m − sᵢ) is split once per round into ⌊γᵢ⌋ and a remainder, instead of
 *   once per attempt (same coins, less arithmetic).
 * - The option at the maximum is accepted with probability 1, so each attempt
 *   succeeds with probability ≥ 1/n and the expected number of attempts is
 *   n / Σ exp(−γᵢ) ≤ n, whatever the scores.
 * - An option far below the maximum costs O(1) expected coins per attempt, since
 *   the first of its ⌊γᵢ⌋ exp(−1) coins already fails with probability 0.63; γ can
 *   be in the millions without slowing the draw. Every attempt starts from a
 *   fresh uniform proposal, so stopping a rejected attempt early is exact.
 * The number of attempts depends on the scores, so running time is data-dependent
 * (a timing side channel in principle); callers should not expose the draw's
 * duration, e.g. by running it once at tally time rather than per request.
 */
export function drawOneRound(scores: readonly number[], candidates: readonly number[], scale: Rational, random: RandomSource): number {
  const n = candidates.length;
  if (n === 0) throw new RangeError('drawOneRound needs at least one candidate');
  let max = 0;
  for (const i of candidates) max = Math.max(max, scores[i] ?? 0);
  const top = BigInt(max);
  const whole: bigint[] = new Array(n);
  const rest: bigint[] = new Array(n);
  for (let j = 0; j < n; j += 1) {
    const gap = top - BigInt(scores[candidates[j] as number] as number);
    const gammaNum = scale.num * gap;
    whole[j] = gammaNum / scale.den;
    rest[j] = gammaNum % scale.den;
  }
  for (;;) {
    const j = uniformBelowSmall(n, random);
    if (bernoulliExpMinusSplit(whole[j] as bigint, rest[j] as bigint, scale.den, random)) {
      return candidates[j] as number;
    }
  }
}

/**
 * k seats by peeling: k rounds, each drawing one winner among the options not yet
 * drawn, each at the per-round scale. Basic composition (Dwork & Roth 2014,
 * Thm. 3.16) gives the total privacy cost as the sum of the rounds' costs; it
 * holds although each round depends on the earlier winners (adaptive composition).
 */
export function drawSeats(scores: readonly number[], seats: number, scale: Rational, random: RandomSource): number[] {
  const remaining = scores.map((_, i) => i);
  const winners: number[] = [];
  for (let round = 0; round < seats; round += 1) {
    const winner = drawOneRound(scores, remaining, scale, random);
    winners.push(winner);
    remaining.splice(remaining.indexOf(winner), 1);
  }
  return winners;
}

/**
 * First-seat probabilities in floating point, for tests and planning displays
 * only (never to decide an outcome): exp(a(sᵢ − m)) / Σⱼ exp(a(sⱼ − m)).
 */
export function firstSeatProbabilities(scores: readonly number[], scaleValue: number): number[] {
  const max = Math.max(...scores);
  const weights = scores.map((s) => Math.exp(scaleValue * (s - max)));
  const total = weights.reduce((a, b) => a + b, 0);
  return weights.map((w) => w / total);
}
