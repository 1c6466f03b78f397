import binomialTest from '@stdlib/stats-binomial-test';
import { describe, expect, it } from 'vitest';
import {
  MAX_TURNOUT_RELEASES,
  liveTurnoutGuidance,
  planLiveTurnout,
  releaseTurnout,
  seriesWithNoise,
  treeSensitivity,
  turnoutError,
  turnoutNoise,
  turnoutSchedule,
  type TurnoutMark,
  type TurnoutPlan,
} from '../../../src/mechanism/index.ts';
import { seededRandom } from './support/seededRandom.ts';

/**
 * The binary-tree counter's nodes, written here from the definition rather than taken from the
 * implementation (Chan, Shi & Song 2011, §3.4; Dwork, Naor, Pitassi & Rothblum 2010): the dyadic
 * intervals ((k − 1)·2^j, k·2^j] with k odd that end by T. Returned as [start, end].
 */
function leftNodes(T: number): [number, number][] {
  const nodes: [number, number][] = [];
  for (let size = 1; size <= T; size *= 2) {
    for (let k = 1; k * size <= T; k += 2) nodes.push([(k - 1) * size, k * size]);
  }
  return nodes;
}

/** The prefix [1, t] as a union of nodes, greedily from the largest: one node per 1-bit of t. */
function decomposition(t: number): [number, number][] {
  const out: [number, number][] = [];
  let start = 0;
  for (let size = 2 ** Math.floor(Math.log2(t)); size >= 1; size /= 2) {
    if (start + size <= t) {
      out.push([start, start + size]);
      start += size;
    }
  }
  return out;
}

describe('the binary-tree counter: structure (Chan, Shi & Song 2011, §3.4)', () => {
  it('a cast touches at most ⌈log2(T + 1)⌉ ≤ ⌈log2 T⌉ + 1 nodes, for every T from 1 to 600', () => {
    for (let T = 1; T <= 600; T += 1) {
      const nodes = leftNodes(T);
      let most = 0;
      for (let leaf = 1; leaf <= T; leaf += 1) most = Math.max(most, nodes.filter(([a, b]) => a < leaf && leaf <= b).length);
      expect(treeSensitivity(T), `T = ${T}`).toBe(most);
      expect(most).toBeLessThanOrEqual(Math.ceil(Math.log2(T)) + 1);
      // Exactly one node completes at each release, so T nodes in all.
      expect(nodes.length).toBe(T);
    }
    expect(treeSensitivity(168)).toBe(8); // ⌈log2 168⌉ = 8; the brief's ⌈log2 T⌉ + 1 = 9 would be loose by one node
    expect(treeSensitivity(256)).toBe(9);
  });

  it('release t is the exact count plus the noise of the nodes of t’s decomposition (seeded streams and noises)', () => {
    const random = seededRandom(7);
    for (const T of [1, 2, 3, 7, 8, 13, 64, 168]) {
      const plan = planLiveTurnout(T, '0.5');
      const casts = Array.from({ length: T }, () => random(1)[0]! % 5);
      const noises = Array.from({ length: T }, () => turnoutNoise(plan, random));
      const series = seriesWithNoise(plan, casts, noises);
      for (let t = 1; t <= T; t += 1) {
        const parts = decomposition(t);
        expect(parts.length).toBe(t.toString(2).replaceAll('0', '').length);
        const exact = casts.slice(0, t).reduce((a, b) => a + b, 0);
        // The node (a, b] is the one completed at release b: its noise is noises[b − 1].
        const noise = parts.reduce((s, [, end]) => s + noises[end - 1]!, 0);
        expect(series[t - 1], `T = ${T}, t = ${t}`).toBe(exact + noise);
      }
    }
  });

  it('kept between releases: at most one exact count per 1-bit of t, none after the last release', () => {
    const T = 168;
    const plan = planLiveTurnout(T, '0.5');
    const random = seededRandom(11);
    let marks: TurnoutMark[] = [];
    let exact = 0;
    for (let t = 1; t <= T; t += 1) {
      exact += t % 3;
      const step = releaseTurnout(plan, marks, t, exact, random);
      marks = step.marks;
      if (t < T) expect(marks.length).toBe(t.toString(2).replaceAll('0', '').length);
    }
    expect(marks).toEqual([]);
    expect(() => releaseTurnout(plan, [], 6, 3, random)).toThrow(/mark at release 4/); // node (4, 6] starts at 4
    expect(() => planLiveTurnout(MAX_TURNOUT_RELEASES + 1, '1')).toThrow();
    expect(() => planLiveTurnout(0, '1')).toThrow();
  });
});

/**
 * Exact privacy of the whole released series (Dwork & Roth 2014, Def. 2.4), not sampled. The series
 * determines the node noises z (release t minus release t − lowbit(t) is node t), and
 * P(series | stream) = Π_t P(z_t) with P(z) ∝ e^(−|z|/b) (Canonne, Kamath & Steinke 2020, Def. 2; the
 * sampler is checked against it in discreteLaplace.test.ts). So the log-ratio for neighbouring streams
 * is exactly (Σ|z′_t| − Σ|z_t|)/b, a rational: compared with ε in integers, no rounding. Outputs are
 * enumerated through the implementation from every noise vector in [−R, R]^T; per node, the term
 * |z_t + δ| − |z_t| (|δ| ≤ 1) takes every value it can for |z_t| ≤ 2, so the window holds the worst
 * output. Neighbours: one member's cast added in one interval (whether they voted).
 */
function privacyLoss(plan: TurnoutPlan, streams: number[][], R: number): { most: bigint; pairs: number; outputs: number } {
  const T = plan.releases;
  const vectors: number[][] = [[]];
  for (let t = 0; t < T; t += 1) {
    const grown: number[][] = [];
    for (const v of vectors) for (let z = -R; z <= R; z += 1) grown.push([...v, z]);
    vectors.splice(0, vectors.length, ...grown);
  }
  const outputsOf = new Map<string, Map<string, number>>();
  for (const s of streams) {
    const m = new Map<string, number>();
    for (const z of vectors)
      m.set(
        seriesWithNoise(plan, s, z).join(','),
        z.reduce((a, x) => a + Math.abs(x), 0),
      );
    expect(m.size).toBe(vectors.length); // distinct noises give distinct series: the map is one-to-one
    outputsOf.set(s.join(','), m);
  }
  let most = -1n;
  let pairs = 0;
  let outputs = 0;
  for (const s of streams) {
    for (let i = 0; i < T; i += 1) {
      const other = s.map((x, j) => (j === i ? x + 1 : x));
      const mb = outputsOf.get(other.join(','));
      if (!mb) continue;
      const ma = outputsOf.get(s.join(','))!;
      pairs += 1;
      for (const [y, absA] of ma) {
        const absB = mb.get(y);
        if (absB === undefined) continue;
        outputs += 1;
        const d = BigInt(Math.abs(absB - absA)); // both directions
        if (d > most) most = d;
      }
    }
  }
  return { most, pairs, outputs };
}

function allStreams(T: number, maxPerInterval: number): number[][] {
  let out: number[][] = [[]];
  for (let t = 0; t < T; t += 1) out = out.flatMap((s) => Array.from({ length: maxPerInterval + 1 }, (_, x) => [...s, x]));
  return out;
}

/** Is the log-ratio Δ/b at most ε? Δ·den_b·den_ε ≤ num_ε·num_b, in integers. */
function withinEpsilon(plan: TurnoutPlan, delta: bigint): boolean {
  return delta * plan.scale.den * plan.epsilon.den <= plan.epsilon.num * plan.scale.num;
}

describe('the whole released series is ε-DP about whether a member voted (exact ratios, short streams)', () => {
  it.each([
    [1, '0.5', 2, 3],
    [2, '1', 2, 3],
    [3, '0.5', 2, 3],
    [4, '0.5', 2, 3],
    [4, '1.25', 2, 3],
    [5, '2', 1, 3],
  ])('T = %d, ε = %s, every stream with at most %d casts an interval: the largest ratio is e^ε, never more', (T, epsilon, perInterval, R) => {
    const plan = planLiveTurnout(T, epsilon);
    const { most, pairs, outputs } = privacyLoss(plan, allStreams(T, perInterval), R);
    expect(pairs).toBeGreaterThan(0);
    expect(outputs).toBeGreaterThan(pairs);
    expect(withinEpsilon(plan, most)).toBe(true);
    // The worst pair reaches e^ε exactly: the noise is not larger than the tree needs (Δ = sensitivity).
    expect(most).toBe(BigInt(plan.sensitivity));
  });

  it('the exact check has power: one node too few in the noise scale is caught at T = 4', () => {
    const honest = planLiveTurnout(4, '0.5');
    const short: TurnoutPlan = { ...honest, scale: { num: honest.scale.num - 4n, den: 1n } }; // b = 2/ε instead of 3/ε
    const { most } = privacyLoss(short, allStreams(4, 1), 2);
    expect(withinEpsilon(short, most)).toBe(false); // log-ratio 3/(2/ε) = 1.5ε
  });
});

describe('the counter’s error against Chan, Shi & Song 2011 (Thm 3.6 with Cor. 2.9) and the exact figure', () => {
  /**
   * Chan, Shi & Song 2011, Corollary 2.9 (as we recall it): for Y a sum of independent Laplace(b_i),
   * 0 < δ < 1 and ν > max(√Σb_i², b_max·√ln(2/δ)), P(|Y| > ν·√(8 ln(2/δ))) ≤ δ; Theorem 3.6 applies it to
   * the binary mechanism's log-many nodes. Its proof is a Chernoff bound on the moment generating
   * function, and the discrete Laplace's, (cosh(1/b) − 1)/(cosh(1/b) − cosh λ), is at most the
   * continuous one's, 1/(1 − b²λ²), for 0 ≤ λ < 1/b (since (cosh x − 1)/x² increases in x), so the
   * bound holds for our noise too. For the example (T = 168 hourly releases, ε = 0.5:
   * b = 8/0.5 = 16, worst release 127 with 7 nodes) it gives ±230 ballots; the exact 95% figure is ±119.
   */
  function chanShiSongBound(nodes: number, b: number, delta: number): number {
    const nu = Math.max(b * Math.sqrt(nodes), b * Math.sqrt(Math.log(2 / delta))) * (1 + 1e-12);
    return nu * Math.sqrt(8 * Math.log(2 / delta));
  }

  it('the form’s figure for 7 days of hourly releases at ε = 0.5 is ±119 ballots at the worst hour, as the issue says', () => {
    const e = turnoutError(168, '0.5');
    expect(e).toMatchObject({ worstRelease: 127, nodes: 7, ballots95: 119 });
    expect(turnoutError(1, '1').ballots95).toBe(3); // one node, b = 1: P(|X| > 2) = 0.073, P(|X| > 3) = 0.027
    expect(turnoutError(168, '1').ballots95).toBe(60);
  });

  it('3 000 seeded runs of T = 168 at ε = 0.5: 5% beyond ±119 at the worst hour, at most 5% beyond the paper’s bound at every hour', () => {
    const T = 168;
    const RUNS = 3000;
    const plan = planLiveTurnout(T, '0.5');
    const b = Number(plan.scale.num) / Number(plan.scale.den);
    const casts: number[] = Array.from({ length: T }, (_, i) => (i % 24 < 8 ? 0 : 4)); // 448 ballots, none at night
    const exact = casts.map((_, i) => casts.slice(0, i + 1).reduce((a, x) => a + x, 0));
    const random = seededRandom(2024);
    const figure = turnoutError(T, '0.5').ballots95;
    const beyondFigureAtWorst = { n: 0 };
    const beyondBound = new Array<number>(T).fill(0);
    const worstErrors: number[] = [];
    let runsWithAnyHourBeyondFigure = 0;
    for (let run = 0; run < RUNS; run += 1) {
      const noises = Array.from({ length: T }, () => turnoutNoise(plan, random));
      const series = seriesWithNoise(plan, casts, noises);
      let any = false;
      for (let t = 1; t <= T; t += 1) {
        const err = Math.abs(series[t - 1]! - exact[t - 1]!);
        const nodes = t.toString(2).replaceAll('0', '').length;
        if (err > chanShiSongBound(nodes, b, 0.05)) beyondBound[t - 1]! += 1;
        if (err > figure) any = true;
        if (t === 127) {
          worstErrors.push(err);
          if (err > figure) beyondFigureAtWorst.n += 1;
        }
      }
      if (any) runsWithAnyHourBeyondFigure += 1;
    }
    // The exact figure: an exact binomial test of the share beyond ±119 at hour 127 against 5%
    // (the figure is the smallest m with P(|error| > m) ≤ 5%, so the true share is just under 5%).
    expect(binomialTest(beyondFigureAtWorst.n, RUNS, { p: 0.05 }).pValue).toBeGreaterThan(0.001);
    // The paper's bound holds at every hour: the share beyond it never exceeds δ = 5% (one-sided exact test).
    for (let t = 0; t < T; t += 1) {
      expect(binomialTest(beyondBound[t]!, RUNS, { p: 0.05, alternative: 'greater' }).pValue).toBeGreaterThan(0.001);
    }
    expect(figure).toBeLessThan(chanShiSongBound(7, b, 0.05));
    worstErrors.sort((x, y) => x - y);
    const measured95 = worstErrors[Math.ceil(0.95 * RUNS) - 1]!;
    expect(Math.abs(measured95 - figure)).toBeLessThan(10);
    console.info(
      `live turnout T = 168, ε = 0.5, ${RUNS} runs: measured 95% |error| at hour 127 = ${measured95} (figure ${figure}, ` +
        `${((100 * beyondFigureAtWorst.n) / RUNS).toFixed(2)}% beyond); Chan–Shi–Song bound ${chanShiSongBound(7, b, 0.05).toFixed(1)}, ` +
        `most runs beyond it at any hour ${Math.max(...beyondBound)}; runs with some hour beyond ±${figure}: ${((100 * runsWithAnyHourBeyondFigure) / RUNS).toFixed(1)}%`,
    );
  });
});

describe('what the form says before a live turnout is enabled', () => {
  it('reproduces the issue’s example: ±119 ballots is ±24% of 500 and ±238% of 50, the latter useless', () => {
    const large = liveTurnoutGuidance(168, '0.5', 500);
    expect(large).toMatchObject({ ballots95: 119, percentOfElectorate: 24, usefulness: 'useful' });
    expect(large.sentence).toContain('±119 ballots');
    expect(large.sentence).toContain('not for all releases at once');
    const small = liveTurnoutGuidance(168, '0.5', 50);
    expect(small).toMatchObject({ ballots95: 119, percentOfElectorate: 238, usefulness: 'useless' });
    expect(small.sentence).toMatch(/would be useless: the error is larger than the whole electorate/);
    expect(liveTurnoutGuidance(168, '0.5', 400).usefulness).toBe('rough'); // 119 ≥ 100
    expect(liveTurnoutGuidance(168, '0.5', 119).usefulness).toBe('useless'); // error equals the electorate
    expect(() => liveTurnoutGuidance(168, '0.5', 0)).toThrow();
  });

  it('releases are fixed by the schedule alone: every interval after the opening, the last at the closing', () => {
    const week = turnoutSchedule(new Date('2026-03-01T09:00Z'), new Date('2026-03-08T09:00Z'), 1);
    expect(week).toHaveLength(168);
    expect(week[0]!.toISOString()).toBe('2026-03-01T10:00:00.000Z');
    expect(week.at(-1)!.toISOString()).toBe('2026-03-08T09:00:00.000Z');
    const day = turnoutSchedule(new Date('2026-03-01T09:00Z'), new Date('2026-03-01T20:30Z'), 3).map((d) => d.toISOString());
    expect(day).toEqual(['2026-03-01T12:00:00.000Z', '2026-03-01T15:00:00.000Z', '2026-03-01T18:00:00.000Z', '2026-03-01T20:30:00.000Z']);
    expect(() => turnoutSchedule(new Date('2026-03-01T09:00Z'), new Date('2026-03-01T09:00Z'), 1)).toThrow();
    expect(() => turnoutSchedule(new Date('2026-03-01T09:00Z'), new Date('2026-03-02T09:00Z'), 2)).toThrow(/interval/);
    expect(() => turnoutSchedule(new Date('2026-01-01T00:00Z'), new Date('2026-12-01T00:00Z'), 1)).toThrow(/releases/);
  });
});
