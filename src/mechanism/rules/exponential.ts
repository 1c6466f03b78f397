import { bernoulliExpMinusSplit } from '../bernoulli.ts';
import { decimalWithPrecision, type Dec } from '../decimal.ts';
import { exponentialScale } from '../neighbour.ts';
import type { Rational } from '../rational.ts';
import { uniformBelowSmall, type RandomSource } from '../random.ts';
import { defineRule } from './rule.ts';

// 60 significant digits, as in bounds.ts.
const Decimal = decimalWithPrecision(60);

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
  try {
    for (;;) {
      const j = uniformBelowSmall(n, random);
      if (bernoulliExpMinusSplit(whole[j] as bigint, rest[j] as bigint, scale.den, random)) {
        return candidates[j] as number;
      }
    }
  } finally {
    // The gaps to the top score are counts in disguise: cleared before the arrays are released.
    // (A BigInt is immutable: the cleared values wait for the garbage collector, unreachable.)
    whole.fill(0n);
    rest.fill(0n);
  }
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

/**
 * If the leader is ahead of all n − 1 others by ≥ m: P(leader) ≥ 1/(1 + (n − 1)·e^(−a·m)), since each
 * other weight is at most e^(−a·m) times the leader's (Dwork & Roth 2014, Def. 3.4); exact when every
 * other option trails by exactly m, and a lower bound when any trails by more.
 */
export function exponentialLeaderChance(n: number, a: Dec, m: number): Dec {
  return new Decimal(1).div(new Decimal(n - 1).times(Decimal.exp(a.times(m).neg())).plus(1));
}

/**
 * The closed form of the smallest margin for P(leader) ≥ p: (1/a)·ln((n − 1)·p/(1 − p)), rounded up
 * (0 when that is not positive). Also a valid start for rules never worse than this one.
 */
export function exponentialMarginGuess(n: number, a: Dec, p: Dec): number {
  const ratio = new Decimal(n - 1).times(p).div(new Decimal(1).minus(p));
  return ratio.lte(1) ? 0 : Decimal.ln(ratio).div(a).ceil().toNumber();
}

export const exponentialRule = defineRule({
  id: 'exponential',
  statementMechanism: 'exponential-mechanism',
  sampler: 'exact-bigint-rejection',
  name: 'the exponential mechanism',
  sentence:
    'Draw rule: the exponential mechanism. Each option’s chance grows with its approvals: every extra approval multiplies its weight in the draw by the same factor.',
  heading: 'Exponential mechanism',
  choiceLabel: 'The exponential mechanism (the usual rule): each option’s chance grows with its approvals',
  commandLineNote: 'the exponential mechanism',
  scaleRole: 'in P(option) ∝ exp(a · approvals) of the exponential mechanism',
  marginTableName: '',
  scale: exponentialScale,
  drawRound: drawOneRound,
  leaderChance: exponentialLeaderChance,
  marginGuess: exponentialMarginGuess,
  exactProbabilities: firstSeatProbabilities,
  exactMaxOptions: Number.POSITIVE_INFINITY,
});
