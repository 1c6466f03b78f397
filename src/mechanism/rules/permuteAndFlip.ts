import { bernoulliExpMinusSplit } from '../bernoulli.ts';
import { decimalWithPrecision, type Dec } from '../decimal.ts';
import { exponentialScale, type Neighbour } from '../neighbour.ts';
import type { Rational } from '../rational.ts';
import { uniformBelowSmall, type RandomSource } from '../random.ts';
import { exponentialMarginGuess } from './exponential.ts';
import { defineRule } from './rule.ts';

// 60 significant digits, as in bounds.ts.
const Decimal = decimalWithPrecision(60);

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
export function permuteAndFlipRound(scores: readonly number[], candidates: readonly number[], scale: Rational, random: RandomSource): number {
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

/**
 * Permute-and-flip, leader ahead of all n − 1 others by ≥ m, x = e^(−a·m):
 * P(leader) ≥ (1/n)·Σ_{t=0}^{n−1} (1 − x)^t = (1 − (1 − x)^n)/(n·x).
 * Proof (ours, from McKenna & Sheldon 2020, Algorithm 1): the leader's coin always succeeds, so
 * it is drawn iff every option visited before it fails; each of those fails with probability
 * ≥ 1 − x, independently, and the number visited before the leader is uniform on {0, …, n − 1}.
 * Equality when the others are tied exactly m below. It is never below the exponential
 * mechanism's bound: on that two-level profile the expected shortfall is m·(1 − P(leader)), and
 * McKenna & Sheldon 2020 prove permute-and-flip's expected shortfall never exceeds the exponential
 * mechanism's (abstract; the theorem number, Thm. 2, is from memory). Also checked on a grid in
 * test/unit/mechanism/permuteAndFlip.test.ts.
 */
export function permuteAndFlipLeaderChance(n: number, a: Dec, m: number): Dec {
  if (m === 0) return new Decimal(1).div(n);
  const x = Decimal.exp(a.times(m).neg());
  return new Decimal(1).minus(new Decimal(1).minus(x).pow(n)).div(x.times(n));
}

/**
 * Permute-and-flip takes the exponential mechanism's scale: ε/(2Δ) is McKenna & Sheldon 2020, Thm. 1
 * (number from memory); for monotone scores ε/Δ follows from its equivalence with report-noisy-max with
 * exponential noise of rate a (Ding, Kifer et al. 2021): the argument of Dwork & Roth 2014, Claim 3.9
 * (report-noisy-max on monotone counts) needs only P(Z ≥ t + 1) ≥ e^(−a)·P(Z ≥ t) for every t, which
 * exponential noise satisfies. Both scales are also checked on exact probabilities, one and two seats,
 * in test/unit/mechanism/permuteAndFlip.test.ts.
 */
function permuteAndFlipScale(perRoundEpsilon: Rational, neighbour: Neighbour): Rational {
  return exponentialScale(perRoundEpsilon, neighbour);
}

export const permuteAndFlipRule = defineRule({
  id: 'permute-and-flip',
  statementMechanism: 'permute-and-flip',
  sampler: 'exact-bigint-permute-and-flip',
  name: 'permute-and-flip',
  sentence:
    'Draw rule: permute-and-flip. The options are put in a random order and each in turn is kept or passed over by a weighted coin; the most approved option is always kept when its turn comes, so on average the winner has at least as many approvals as under the exponential mechanism, with the same privacy.',
  heading: 'Permute-and-flip',
  choiceLabel: 'Permute-and-flip: the same privacy, and on average a winner with at least as many approvals',
  commandLineNote: 'McKenna & Sheldon 2020: same ε, never a larger expected shortfall',
  scaleRole: 'in each coin exp(−a · (top approvals − approvals)) of permute-and-flip (McKenna & Sheldon 2020)',
  marginTableName: 'permute-and-flip ',
  scale: permuteAndFlipScale,
  drawRound: permuteAndFlipRound,
  leaderChance: permuteAndFlipLeaderChance,
  // Never needs a larger lead than the exponential mechanism (above), so its closed form is a start.
  marginGuess: exponentialMarginGuess,
  exactProbabilities: permuteAndFlipProbabilities,
  exactMaxOptions: PF_EXACT_MAX_OPTIONS,
});
