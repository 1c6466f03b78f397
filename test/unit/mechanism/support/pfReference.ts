import { existsSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { D, type Dec } from './exactReference.ts';

/**
 * Permute-and-flip first-seat probabilities from the definition (McKenna & Sheldon
 * 2020, Algorithm 1), written independently of src/mechanism: with
 * pⱼ = exp(a·(sⱼ − m)) and qⱼ = 1 − pⱼ, option i wins iff exactly the options of some
 * set S ⊆ others come before it in the random order, all of them fail, and i's own
 * coin succeeds. A uniformly random order puts exactly S before i with probability
 * |S|!·(d − 1 − |S|)!/d!, so
 *   P(i) = pᵢ · Σ_{S ⊆ others} |S|!(d−1−|S|)!/d! · Π_{j∈S} qⱼ.
 * Every subset is enumerated (2^(d−1) per option), products built one bit at a time.
 */
export function pfFirstSeatDecimal(scores: readonly number[], a: Dec): Dec[] {
  const d = scores.length;
  if (d > 13) throw new RangeError('the decimal reference enumerates subsets; keep d ≤ 13');
  const max = Math.max(...scores);
  const p = scores.map((s) => D.exp(a.times(s - max)));
  const factorial = [new D(1)];
  for (let k = 1; k <= d; k += 1) factorial.push((factorial[k - 1] as Dec).times(k));
  const orderWeight = Array.from({ length: d }, (_, size) =>
    (factorial[size] as Dec).times(factorial[d - 1 - size] as Dec).div(factorial[d] as Dec),
  );
  return p.map((pi, i) => {
    const others = p.filter((_, j) => j !== i).map((pj) => new D(1).minus(pj));
    const n = others.length;
    const product: Dec[] = new Array(1 << n);
    const size: number[] = new Array(1 << n);
    product[0] = new D(1);
    size[0] = 0;
    let sum = orderWeight[0] as Dec;
    for (let mask = 1; mask < 1 << n; mask += 1) {
      const low = 31 - Math.clz32(mask & -mask);
      const rest = mask & (mask - 1);
      product[mask] = (product[rest] as Dec).times(others[low] as Dec);
      size[mask] = (size[rest] as number) + 1;
      sum = sum.plus((product[mask] as Dec).times(orderWeight[size[mask] as number] as Dec));
    }
    return pi.times(sum);
  });
}

/**
 * The same sum over subsets in double precision, for the real profiles (d = 16, 17:
 * 2^16 subsets per option). Every term is a product of numbers in [0, 1] times a
 * positive weight, so there is no cancellation; the result is good to ~1e-12.
 */
export function pfFirstSeatFloat(scores: readonly number[], a: number): number[] {
  const d = scores.length;
  if (d > 20) throw new RangeError('the float reference enumerates subsets; keep d ≤ 20');
  const max = Math.max(...scores);
  const p = scores.map((s) => Math.exp(a * (s - max)));
  const logFactorial = [0];
  for (let k = 1; k <= d; k += 1) logFactorial.push((logFactorial[k - 1] as number) + Math.log(k));
  const orderWeight = Array.from({ length: d }, (_, size) =>
    Math.exp((logFactorial[size] as number) + (logFactorial[d - 1 - size] as number) - (logFactorial[d] as number)),
  );
  return p.map((pi, i) => {
    const others = p.filter((_, j) => j !== i).map((pj) => 1 - pj);
    const n = others.length;
    const product = new Float64Array(1 << n);
    const size = new Uint8Array(1 << n);
    product[0] = 1;
    let sum = orderWeight[0] as number;
    for (let mask = 1; mask < 1 << n; mask += 1) {
      const low = 31 - Math.clz32(mask & -mask);
      const rest = mask & (mask - 1);
      product[mask] = (product[rest] as number) * (others[low] as number);
      size[mask] = (size[rest] as number) + 1;
      sum += (product[mask] as number) * (orderWeight[size[mask] as number] as number);
    }
    return pi * sum;
  });
}

/** P(ordered seats) under peeling: product over rounds of the round's first-seat law among options left. */
export function pfOrderedOutcomeDecimal(scores: readonly number[], winners: readonly number[], a: Dec): Dec {
  let left = scores.map((_, i) => i);
  let prob = new D(1);
  for (const w of winners) {
    const round = pfFirstSeatDecimal(
      left.map((i) => scores[i] as number),
      a,
    );
    prob = prob.times(round[left.indexOf(w)] as Dec);
    left = left.filter((i) => i !== w);
  }
  return prob;
}

/** Exponential-mechanism first-seat law in double precision (Dwork & Roth 2014, Def. 3.4). */
export function emFirstSeatFloat(scores: readonly number[], a: number): number[] {
  const max = Math.max(...scores);
  const w = scores.map((s) => Math.exp(a * (s - max)));
  const total = w.reduce((x, y) => x + y, 0);
  return w.map((x) => x / total);
}

/** E[m − s(winner)] for a first-seat law. */
export function expectedShortfall(scores: readonly number[], probabilities: readonly number[]): number {
  const max = Math.max(...scores);
  return probabilities.reduce((acc, p, i) => acc + p * (max - (scores[i] as number)), 0);
}

/**
 * Approval counts per alternative from a PrefLib categorical file (format in
 * shared/datasets/README.md): each body line `count: {approved},{rest}`.
 */
export function approvalCounts(fileName: string): number[] {
  const text = readFileSync(path.join(datasetsDir(), fileName), 'utf8');
  const d = Number(/# NUMBER ALTERNATIVES: (\d+)/.exec(text)?.[1]);
  const counts = new Array<number>(d).fill(0);
  for (const line of text.split('\n')) {
    const m = /^(\d+):\s*(\{[^}]*\}|\d+)/.exec(line);
    if (!m) continue;
    const approved = (m[2] as string).replace(/[{}]/g, '').split(',').filter(Boolean).map(Number);
    for (const alt of approved) counts[alt - 1] = (counts[alt - 1] as number) + Number(m[1]);
  }
  return counts;
}

/** shared/datasets sits beside the repository (CI) or two levels up (a worktree under wt/). */
function datasetsDir(): string {
  const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..', '..', '..', '..');
  const candidates = [path.resolve(root, '..', 'shared', 'datasets'), path.resolve(root, '..', '..', 'shared', 'datasets')];
  const found = candidates.find((c) => existsSync(c));
  if (!found) throw new Error(`shared/datasets not found (looked in ${candidates.join(', ')})`);
  return found;
}
