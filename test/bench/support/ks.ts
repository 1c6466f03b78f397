/**
 * The two-sample Kolmogorov–Smirnov test, for the benchmarks' "are these latencies told apart" figures.
 * D is the largest gap between the two empirical distribution functions; the p-value is the limiting
 * distribution's tail, Q(λ) = 2 Σ_{k≥1} (−1)^{k−1} exp(−2k²λ²) at λ = D·√(mn/(m+n)) (Kolmogorov 1933,
 * Smirnov 1948). Written here because the registry's statistics packages offer only the one-sample test;
 * checked against SciPy's kstwobign in test/unit/bench/ks.test.ts.
 */
export interface KsResult {
  d: number;
  p: number;
}

/** Q(λ): the chance that the limiting Kolmogorov statistic exceeds λ. */
export function kolmogorovTail(lambda: number): number {
  if (lambda <= 0) return 1;
  // Below about 0.3 the alternating series converges slowly; the tail there is 1 to double precision.
  if (lambda < 0.3) return 1;
  let sum = 0;
  for (let k = 1; k <= 100; k++) {
    const term = Math.exp(-2 * k * k * lambda * lambda);
    sum += k % 2 === 1 ? term : -term;
    if (term < 1e-17) break;
  }
  return Math.min(1, Math.max(0, 2 * sum));
}

export function ksTwoSample(a: readonly number[], b: readonly number[]): KsResult {
  if (a.length === 0 || b.length === 0) throw new Error('the two-sample test needs two non-empty samples');
  const x = [...a].sort((p, q) => p - q);
  const y = [...b].sort((p, q) => p - q);
  let i = 0;
  let j = 0;
  let d = 0;
  while (i < x.length && j < y.length) {
    const v = Math.min(x[i]!, y[j]!);
    while (i < x.length && x[i]! <= v) i++;
    while (j < y.length && y[j]! <= v) j++;
    d = Math.max(d, Math.abs(i / x.length - j / y.length));
  }
  const en = (x.length * y.length) / (x.length + y.length);
  return { d, p: kolmogorovTail(Math.sqrt(en) * d) };
}
