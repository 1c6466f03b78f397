import { describe, expect, it } from 'vitest';
import { kolmogorovTail, ksTwoSample } from '../../bench/support/ks.ts';

/**
 * Reference values from SciPy 1.17.1, computed on this machine when the test was written:
 * scipy.stats.kstwobign.sf(sqrt(m n / (m + n)) * d), and ks_2samp(...).statistic for D.
 */
describe('two-sample Kolmogorov–Smirnov test (benchmark helper)', () => {
  const range = (n: number, f: (i: number) => number) => Array.from({ length: n }, (_, i) => f(i));

  it.each([
    [1 / 3, 10, 12, 0.5794868996876494],
    [0.2, 100, 80, 0.05712966989683206],
    [0.22, 200, 150, 0.0004984557810053673],
    [0.05, 1000, 1000, 0.1640791977266521],
    [0.1, 500, 400, 0.023487218874156772],
  ])('the limiting tail at D = %f, m = %i, n = %i matches SciPy (%f)', (d, m, n, scipy) => {
    expect(kolmogorovTail(Math.sqrt((m * n) / (m + n)) * d)).toBeCloseTo(scipy, 9);
  });

  it('finds the statistic SciPy finds', () => {
    expect(
      ksTwoSample(
        range(10, (i) => i + 1),
        range(12, (i) => i + 3),
      ).d,
    ).toBeCloseTo(0.33333333333333337, 12);
    expect(
      ksTwoSample(
        range(100, (i) => i),
        range(80, (i) => i + 20),
      ).d,
    ).toBeCloseTo(0.2, 12);
    expect(
      ksTwoSample(
        range(200, (i) => 0.5 * i),
        range(150, (i) => 0.5 * i + 3),
      ).d,
    ).toBeCloseTo(0.22, 12);
  });

  it('gives D = 0 and p = 1 for the same sample, and refuses an empty one', () => {
    const a = range(50, (i) => (i * 37) % 11);
    expect(ksTwoSample(a, [...a].reverse())).toEqual({ d: 0, p: 1 });
    expect(() => ksTwoSample([], a)).toThrow(/non-empty/);
  });
});
