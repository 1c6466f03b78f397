/**
 * The draw: exact samplers against a floating-point Gumbel-max baseline (argmax of a·sᵢ plus
 * Gumbel noise; equal in law in exact arithmetic, but floats decide its outcome, which is what
 * Mironov 2012 and Ilvento 2020 warn against). The baseline is the ceiling. One and 10 seats,
 * d = 20, 100, 1000; scores are seeded uniform integers up to 1000 (an electorate of 1000).
 * Every rule of the registry (src/mechanism/rules/) is measured.
 */
import { uniformInt } from 'pure-rand/distribution/uniformInt';
import { xoroshiro128plus } from 'pure-rand/generator/xoroshiro128plus';
import { RULES, makeDraw } from '../../src/mechanism/index.ts';
import { pooledRandomBytes } from '../../src/osRandom.ts';
import { figure, type BenchOptions, type Figure } from './support/figures.ts';

interface Sampler {
  name: string;
  /** A function making one full draw of `seats` winners from these scores. */
  make(scores: readonly number[], seats: number): () => unknown;
}

// One per rule in the registry; permute-and-flip (McKenna & Sheldon 2020) draws a lazy Fisher–Yates order and
// the same exact exp(−γ) coins, at most d per round.
const random = pooledRandomBytes();
const SAMPLERS: Sampler[] = RULES.map((rule) => ({
  name: `${rule.id} (exact)`,
  make(scores, seats) {
    const draw = makeDraw({ epsilon: '1', options: scores.length, seats, neighbour: 'replace-one', rule: rule.id });
    return () => draw.draw(scores, random);
  },
}));

/** The float baseline, peeling seats at ε/k each like the exact draw. */
function gumbelMax(scores: readonly number[], seats: number): () => unknown {
  const a = 0.5 / seats; // ε = 1, replace-one: a = ε/(2Δ), per round ε/k
  return () => {
    const taken = new Set<number>();
    for (let k = 0; k < seats; k++) {
      let best = -1;
      let bestKey = -Infinity;
      for (let i = 0; i < scores.length; i++) {
        if (taken.has(i)) continue;
        const key = a * scores[i]! - Math.log(-Math.log(Math.random()));
        if (key > bestKey) [best, bestKey] = [i, key];
      }
      taken.add(best);
    }
    return taken;
  };
}

function scoresFor(d: number, seed: number): number[] {
  const rng = xoroshiro128plus(seed);
  return Array.from({ length: d }, () => uniformInt(rng, 0, 1000));
}

/** Draws per second over about `budgetMs`, after a warm-up. */
function perSecond(f: () => unknown, budgetMs: number): number {
  for (let i = 0; i < 20; i++) f();
  let n = 0;
  const start = performance.now();
  while (performance.now() - start < budgetMs || n < 20) {
    f();
    n++;
  }
  return n / ((performance.now() - start) / 1000);
}

export function run(opts: BenchOptions): Figure[] {
  const budget = opts.quick ? 40 : 300;
  const figures: Figure[] = [];
  for (const seats of [1, 10]) {
    for (const d of [20, 100, 1000]) {
      const scores = scoresFor(d, d * 31 + seats);
      const baseline = perSecond(gumbelMax(scores, seats), budget);
      for (const s of SAMPLERS) {
        figures.push(
          figure(`draw, ${s.name}, ${seats} seat${seats > 1 ? 's' : ''}, d = ${d}`, perSecond(s.make(scores, seats), budget), 'draws/s', baseline),
        );
      }
    }
  }
  return figures;
}
