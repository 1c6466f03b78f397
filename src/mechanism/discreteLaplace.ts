import { bernoulliExpMinus, bernoulliExpMinusSplit, bernoulliRational } from './bernoulli.ts';
import { uniformBelow, type RandomSource } from './random.ts';

/**
 * The discrete Laplace distribution on the integers with rational scale b = t/s:
 * P(x) = (e^(1/b) − 1)/(e^(1/b) + 1) · e^(−|x|/b) (Canonne, Kamath & Steinke 2020, Def. 2).
 * Sampled exactly, with integers and the exact Bernoulli(exp(−γ)) coin only, by
 * Canonne, Kamath & Steinke 2020, Algorithm 2:
 *
 *   loop: U uniform in {0, …, t − 1}; D ~ Bernoulli(exp(−U/t)), restart if D = 0;
 *         V = number of successes of Bernoulli(exp(−1)) before the first failure;
 *         X = U + t·V (geometric, P(X = x) ∝ e^(−x/t)); Y = ⌊X/s⌋ (geometric, ∝ e^(−y·s/t));
 *         B ~ Bernoulli(1/2); restart if B = 1 and Y = 0; return (1 − 2B)·Y.
 *
 * Expected work is a constant times (1 + b) coin flips at worst; no float decides anything.
 */
export function discreteLaplace(t: bigint, s: bigint, random: RandomSource): bigint {
  if (typeof t !== 'bigint' || typeof s !== 'bigint' || t < 1n || s < 1n) {
    throw new RangeError('discreteLaplace needs integers t ≥ 1 and s ≥ 1 (scale t/s)');
  }
  for (;;) {
    const u = uniformBelow(t, random);
    if (!bernoulliExpMinus({ num: u, den: t }, random)) continue;
    let v = 0n;
    while (bernoulliExpMinusSplit(1n, 0n, 1n, random)) v += 1n;
    const y = (u + t * v) / s;
    const negative = bernoulliRational(1n, 2n, random);
    if (negative && y === 0n) continue;
    return negative ? -y : y;
  }
}
