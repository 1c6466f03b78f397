import { discreteLaplace } from './discreteLaplace.ts';
import { toEpsilon, type Epsilon } from './epsilon.ts';
import { InvalidMechanismConfig } from './errors.ts';
import type { RandomSource } from './random.ts';
import { rational, type Rational } from './rational.ts';

/**
 * A live turnout under pure ε-differential privacy: the binary-tree counter (Dwork, Naor, Pitassi &
 * Rothblum 2010; Chan, Shi & Song 2011, "the binary mechanism", §3.4) over T releases at fixed times.
 *
 * The stream is x_1 … x_T, x_i the casts in the i-th interval; release t is a noisy Σ_{i ≤ t} x_i.
 * Tree nodes are the dyadic intervals (t − 2^j, t] with j the number of trailing zero bits of t
 * (t = k·2^j, k odd): exactly one node completes at each release, and the prefix [1, t] is the union
 * of the nodes of t, t − lowbit(t), … (one per 1-bit of t). Nodes (t − 2^j, t] with k even are never
 * needed, so they are never made (the left-children-only tree). Each node carries independent discrete
 * Laplace noise (Canonne, Kamath & Steinke 2020), so release t is the sum of popcount(t) noisy nodes,
 * and release t = release(t − lowbit(t)) + noisy node of t: the released series determines every
 * noisy node and each node its release.
 *
 * Privacy: whether one member voted changes exactly one x_i by one, hence the exact count of every
 * node containing i by one. The number of nodes a leaf lies in (the L1 sensitivity) is
 * treeSensitivity(T) = ⌈log2(T + 1)⌉: at most ⌈log2 T⌉ + 1, and one less when T is not a power of two
 * (leaf 1 lies in the nodes (0, 2^j] for every 2^j ≤ T). Noise of scale b = sensitivity/ε on every
 * node makes the whole released series ε-DP (Laplace mechanism, Dwork & Roth 2014, Thm 3.6; its
 * discrete form, Canonne, Kamath & Steinke 2020, Thm 15 as we recall it). Moving one member's cast
 * from one interval to another is two such changes: 2ε.
 */

/** More releases than this (an hourly schedule over 24 weeks) are refused: the error would be useless anyway. */
export const MAX_TURNOUT_RELEASES = 4032;

export interface TurnoutPlan {
  /** T, the number of releases. */
  releases: number;
  epsilon: Epsilon;
  /** Nodes one cast touches: ⌈log2(T + 1)⌉. */
  sensitivity: number;
  /** b = sensitivity/ε, the discrete Laplace scale of every node, in lowest terms. */
  scale: Rational;
}

function lowBit(t: number): number {
  return t & -t;
}

function bitCount(t: number): number {
  let n = 0;
  for (let x = t; x > 0; x -= lowBit(x)) n += 1;
  return n;
}

/** ⌈log2(T + 1)⌉: the most left-children-only tree nodes over T releases that one leaf lies in. */
export function treeSensitivity(releases: number): number {
  checkReleases(releases);
  return 32 - Math.clz32(releases);
}

function checkReleases(releases: number): void {
  if (!Number.isSafeInteger(releases) || releases < 1 || releases > MAX_TURNOUT_RELEASES) {
    throw new InvalidMechanismConfig(`a live turnout needs from 1 to ${MAX_TURNOUT_RELEASES} releases (got ${String(releases).slice(0, 12)})`);
  }
}

export function planLiveTurnout(releases: number, epsilon: string | Epsilon): TurnoutPlan {
  checkReleases(releases);
  const e = toEpsilon(epsilon);
  const sensitivity = treeSensitivity(releases);
  return { releases, epsilon: e, sensitivity, scale: rational(BigInt(sensitivity) * e.den, e.num) };
}

/**
 * What must be remembered between releases, at the releases t′ whose exact count a later node still
 * starts from (t with its lowest bits cleared, one per 1-bit of t): the exact turnout there and the
 * noisy release there. The exact counts are needed only until the nodes starting at them complete;
 * after the last release nothing is kept.
 */
export interface TurnoutMark {
  at: number;
  exact: number;
  released: number;
}

export interface TurnoutStep {
  /** The noisy turnout released at this step (an integer, possibly negative or above the electorate). */
  released: number;
  /** The marks to keep for the next step; empty after the last release. */
  marks: TurnoutMark[];
}

/**
 * Release number `step` (1 … T) from the exact turnout now and the marks kept by the previous step,
 * with the node's noise given. The node is (step − lowbit(step), step]; its exact count is the exact
 * turnout now minus the one marked at its start.
 */
export function releaseWithNoise(plan: TurnoutPlan, marks: readonly TurnoutMark[], step: number, exactNow: number, noise: number): TurnoutStep {
  if (!Number.isSafeInteger(step) || step < 1 || step > plan.releases) {
    throw new InvalidMechanismConfig(`release ${String(step).slice(0, 12)} is outside 1 … ${plan.releases}`);
  }
  if (!Number.isSafeInteger(exactNow) || exactNow < 0) throw new InvalidMechanismConfig('the exact turnout must be a whole number ≥ 0');
  const start = step - lowBit(step);
  const from = start === 0 ? { at: 0, exact: 0, released: 0 } : marks.find((m) => m.at === start);
  if (!from) throw new InvalidMechanismConfig(`release ${step} needs the mark at release ${start}`);
  const count = exactNow - from.exact;
  if (count < 0) throw new InvalidMechanismConfig('the exact turnout went down between releases');
  const released = from.released + count + noise;
  if (step === plan.releases) return { released, marks: [] };
  // Keep the truncations of `step` (step, step − lowbit(step), …): every later node starts at one of them.
  const keep = new Set<number>();
  for (let x = step; x > 0; x -= lowBit(x)) keep.add(x);
  const next = marks.filter((m) => keep.has(m.at) && m.at !== step);
  next.push({ at: step, exact: exactNow, released });
  return { released, marks: next.sort((a, b) => a.at - b.at) };
}

/** One node's noise: discrete Laplace of the plan's scale. */
export function turnoutNoise(plan: TurnoutPlan, random: RandomSource): number {
  return Number(discreteLaplace(plan.scale.num, plan.scale.den, random));
}

/** Release number `step`, drawing its node's noise from `random`. */
export function releaseTurnout(plan: TurnoutPlan, marks: readonly TurnoutMark[], step: number, exactNow: number, random: RandomSource): TurnoutStep {
  return releaseWithNoise(plan, marks, step, exactNow, turnoutNoise(plan, random));
}

/** The whole released series for a stream of per-interval casts and given node noises (for checks and simulation). */
export function seriesWithNoise(plan: TurnoutPlan, casts: readonly number[], noises: readonly number[]): number[] {
  if (casts.length !== plan.releases || noises.length !== plan.releases) {
    throw new InvalidMechanismConfig(`the stream and the noises need ${plan.releases} entries`);
  }
  let marks: TurnoutMark[] = [];
  let exact = 0;
  return casts.map((x, i) => {
    exact += x;
    const step = releaseWithNoise(plan, marks, i + 1, exact, noises[i] as number);
    marks = step.marks;
    return step.released;
  });
}

/** How many noisy nodes release t sums: popcount(t). */
export function nodesInRelease(t: number): number {
  return bitCount(t);
}

export interface TurnoutError {
  /** The release with the most nodes (the first t with popcount ⌊log2(T + 1)⌋). */
  worstRelease: number;
  nodes: number;
  /** Half-width, in ballots, that the worst release's error stays within with probability ≥ 95%. */
  ballots95: number;
  /** Standard deviation of the worst release's error, in ballots. */
  sd: number;
}

/**
 * The 95% error of the worst release, for guidance only (floats; nothing is decided by it). The error
 * of release t is a sum of n = popcount(t) independent discrete Laplace variables of scale b. Each is
 * G − G′ with G, G′ independent geometric, P(G = g) = (1 − q)q^g, q = e^(−1/b) (Inusah & Kozubowski 2006),
 * so the sum is N − N′ with N, N′ independent negative binomial (n, q), and P(|N − N′| > m) =
 * 2 Σ_g P(N′ = g) P(N ≥ m + g + 1): summed directly, without any approximation but rounding. The
 * result is the smallest m with P(|error| > m) ≤ 5%.
 */
export function turnoutError(releases: number, epsilon: string | Epsilon): TurnoutError {
  const plan = planLiveTurnout(releases, epsilon);
  const nodes = 31 - Math.clz32(releases + 1); // ⌊log2(T + 1)⌋, the most 1-bits of any t ≤ T
  const worstRelease = 2 ** nodes - 1;
  const b = Number(plan.scale.num) / Number(plan.scale.den);
  return { worstRelease, nodes, ballots95: quantileOfSum(nodes, b, 0.05), sd: Math.sqrt(nodes * varianceOf(b)) };
}

/** Var of one discrete Laplace of scale b: 2q/(1 − q)². */
function varianceOf(b: number): number {
  const q = Math.exp(-1 / b);
  return (2 * q) / (1 - q) ** 2;
}

function quantileOfSum(n: number, b: number, alpha: number): number {
  const q = Math.exp(-1 / b);
  // Negative binomial (n, q) on 0 … N: past its mode the terms fall by a factor below 1 each step, and
  // it stops once a term is below 1e-18, so what is left beyond N is below 1e-18·b/(1 − …) ≈ 1e-14.
  const pmf: number[] = [(1 - q) ** n];
  const mode = (n * q) / (1 - q);
  for (let g = 0; g <= mode || (pmf[g] as number) >= 1e-18; g += 1) pmf.push((pmf[g] as number) * q * ((g + n) / (g + 1)));
  const size = pmf.length;
  const survival = new Float64Array(size + 1); // survival[j] = P(N ≥ j)
  for (let j = size - 1; j >= 0; j -= 1) survival[j] = (survival[j + 1] as number) + (pmf[j] as number);
  const beyond = (m: number): number => {
    let p = 0;
    for (let g = 0; g + m + 1 < size; g += 1) p += (pmf[g] as number) * (survival[g + m + 1] as number);
    return 2 * p;
  };
  let lo = 0;
  let hi = size;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (beyond(mid) <= alpha) hi = mid;
    else lo = mid + 1;
  }
  return lo;
}

/** Release intervals an organiser may choose, in hours. */
export const TURNOUT_INTERVAL_HOURS = [1, 3, 6, 12, 24] as const;
export type TurnoutIntervalHours = (typeof TURNOUT_INTERVAL_HOURS)[number];

const HOUR_MS = 3_600_000;

/**
 * The fixed release times for a vote from `opensAt` to `closesAt`: one every `intervalHours` after the
 * opening, the last at the closing (earlier if the interval divides the voting time exactly). Fixed
 * before opening, so when a release happens says nothing about the casts.
 */
export function turnoutSchedule(opensAt: Date, closesAt: Date, intervalHours: number): Date[] {
  if (!(TURNOUT_INTERVAL_HOURS as readonly number[]).includes(intervalHours)) {
    throw new InvalidMechanismConfig(`a release interval must be one of ${TURNOUT_INTERVAL_HOURS.join(', ')} hours`);
  }
  const span = closesAt.getTime() - opensAt.getTime();
  if (!Number.isFinite(span) || span <= 0) throw new InvalidMechanismConfig('voting must close after it opens');
  const step = intervalHours * HOUR_MS;
  const count = Math.ceil(span / step);
  checkReleases(count);
  return Array.from({ length: count }, (_, i) => new Date(Math.min(opensAt.getTime() + (i + 1) * step, closesAt.getTime())));
}

/**
 * Our own planning lines, stated on the form: useless when the 95% error is at least the whole
 * electorate; rough when it is a quarter of it or more; else useful.
 */
export type TurnoutUsefulness = 'useful' | 'rough' | 'useless';
export const ROUGH_TURNOUT_SHARE = 0.25;

export interface TurnoutGuidance extends TurnoutError {
  releases: number;
  electorate: number;
  /** ballots95 as a whole percentage of the electorate, rounded up. */
  percentOfElectorate: number;
  usefulness: TurnoutUsefulness;
  sentence: string;
}

/** What the form shows before a live turnout is enabled: the error in ballots for this electorate and schedule. */
export function liveTurnoutGuidance(releases: number, epsilon: string | Epsilon, electorate: number): TurnoutGuidance {
  if (!Number.isSafeInteger(electorate) || electorate < 1) {
    throw new InvalidMechanismConfig('the electorate must be a whole number of at least 1');
  }
  const e = toEpsilon(epsilon);
  const error = turnoutError(releases, e);
  const percentOfElectorate = Math.ceil((100 * error.ballots95) / electorate);
  const usefulness: TurnoutUsefulness =
    error.ballots95 >= electorate ? 'useless' : error.ballots95 >= ROUGH_TURNOUT_SHARE * electorate ? 'rough' : 'useful';
  const where = releases === 1 ? 'The one release' : `Any one of the ${releases} releases`;
  const base =
    `${where} is within ±${error.ballots95} ballots of the true turnout with at least 95% certainty` +
    (releases === 1
      ? ''
      : ` (that is for the noisiest, release ${error.worstRelease}, a sum of ${error.nodes} noisy parts; not for all releases at once)`) +
    `: ±${percentOfElectorate}% of an electorate of ${electorate}, at ε = ${e.text} for whether a member voted.`;
  const verdict =
    usefulness === 'useless'
      ? ` With an electorate of ${electorate} this would be useless: the error is larger than the whole electorate. Choose fewer releases or a larger ε, or leave it off.`
      : usefulness === 'rough'
        ? ` That is rough: only large swings in participation will show.`
        : '';
  return { ...error, releases, electorate, percentOfElectorate, usefulness, sentence: base + verdict };
}
