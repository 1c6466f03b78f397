import DecimalImport from 'decimal.js';

/**
 * Closed-form exponential-mechanism probabilities in decimal.js at 50 digits,
 * written independently of src/mechanism (McSherry & Talwar 2007; Dwork & Roth
 * 2014, Def. 3.4): P(i) = exp(a·sᵢ) / Σⱼ exp(a·sⱼ).
 */
type DecimalConstructor = typeof import('decimal.js').Decimal;
const imported = DecimalImport as unknown as DecimalConstructor & { default?: DecimalConstructor };
const Base = typeof imported.clone === 'function' ? imported : (imported.default as DecimalConstructor);
export const D = Base.clone({ precision: 50 });
export type Dec = InstanceType<typeof D>;

export function scaleOf(num: bigint, den: bigint): Dec {
  return new D(num.toString()).div(den.toString());
}

export function firstSeatReference(scores: readonly number[], a: Dec): Dec[] {
  const weights = scores.map((s) => D.exp(a.times(s)));
  const total = weights.reduce((x, w) => x.plus(w), new D(0));
  return weights.map((w) => w.div(total));
}

/** P(ordered outcome) for peeling: product over rounds of the round's closed form among remaining options. */
export function orderedOutcomeReference(scores: readonly number[], winners: readonly number[], a: Dec): Dec {
  return orderedOutcomeFromWeights(weightsOf(scores, a), winners);
}

export function weightsOf(scores: readonly number[], a: Dec): Dec[] {
  return scores.map((s) => D.exp(a.times(s)));
}

export function orderedOutcomeFromWeights(weights: readonly Dec[], winners: readonly number[]): Dec {
  let p = new D(1);
  let total = weights.reduce((x, w) => x.plus(w), new D(0));
  for (const w of winners) {
    const weight = weights[w] as Dec;
    p = p.times(weight).div(total);
    total = total.minus(weight);
  }
  return p;
}

/** Every ordered choice of k distinct options out of d. */
export function orderedOutcomes(d: number, k: number): number[][] {
  if (k === 0) return [[]];
  const out: number[][] = [];
  for (const prefix of orderedOutcomes(d, k - 1)) {
    for (let i = 0; i < d; i += 1) if (!prefix.includes(i)) out.push([...prefix, i]);
  }
  return out;
}
