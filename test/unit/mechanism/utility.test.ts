import binomialTest from '@stdlib/stats-binomial-test';
import { describe, expect, it } from 'vitest';
import { makeExponentialDraw } from '../../../src/mechanism/index.ts';
import { D, firstSeatReference, scaleOf } from './support/exactReference.ts';
import { seededRandom } from './support/seededRandom.ts';

/**
 * Utility of the exponential mechanism (Dwork & Roth 2014, Cor. 3.12; Thm. 3.11):
 * P[ s(winner) ≤ OPT − (1/a)(ln d + t) ] ≤ e^(−t), with a = ε/(2Δ) for replace-one.
 * The profiles put every other option just beyond the threshold, where the
 * bound is nearly tight, so a sampler that favoured low scores would fail.
 */
const DRAWS = 20_000;

describe('utility: failure rate stays ≤ e^(−t) (Dwork & Roth 2014, Cor. 3.12)', () => {
  it.each([1, 2, 3])('t = %i, d = 20, ε = 1', (t) => {
    const d = 20;
    const draw = makeExponentialDraw({ epsilon: '1', options: d, seats: 1, neighbour: 'replace-one' });
    const a = scaleOf(draw.perRoundScale.num, draw.perRoundScale.den);
    const threshold = D.ln(d).plus(t).div(a); // 2(ln 20 + t)
    const gap = threshold.ceil().toNumber();
    const scores = [40, ...new Array(d - 1).fill(40 - gap)];
    const limit = Math.exp(-t);

    // Exact failure probability from the closed form: must respect the theorem.
    const exactFail = firstSeatReference(scores, a)
      .slice(1)
      .reduce((x, p) => x.plus(p), new D(0));
    expect(exactFail.lte(limit)).toBe(true);
    expect(exactFail.toNumber()).toBeGreaterThan(limit * 0.6); // the profile is near the bound

    const random = seededRandom(400 + t);
    let failures = 0;
    for (let i = 0; i < DRAWS; i += 1) if ((scores[draw.draw(scores, random)[0]!] as number) <= 40 - threshold.toNumber()) failures += 1;
    // One-sided exact binomial test: is the failure rate significantly above e^(−t)?
    expect(binomialTest(failures, DRAWS, { p: limit, alternative: 'greater' }).pValue).toBeGreaterThan(0.001);
  });

  it('the reported withinApprovals is the theorem’s margin, rounded up', () => {
    for (const [epsilon, d, beta, seats] of [
      ['1', 3, 0.05, 1],
      ['0.5', 17, 0.1, 1],
      ['2', 16, 0.01, 3],
    ] as const) {
      const draw = makeExponentialDraw({ epsilon, options: d, seats, neighbour: 'replace-one' });
      const a = scaleOf(draw.perRoundScale.num, draw.perRoundScale.den);
      const exact = D.ln(d)
        .plus(D.ln(new D(1).div(beta)))
        .div(a);
      const reported = draw.bounds(beta).withinApprovals;
      expect(exact.lte(reported)).toBe(true);
      expect(new D(reported).minus(exact).lt('0.01')).toBe(true);
    }
    // For a = ε/2 the margin is (2/ε)(ln d + ln 1/β): 2(ln 3 + ln 20) = 8.1887 → 8.19.
    expect(makeExponentialDraw({ epsilon: '1', options: 3, seats: 1, neighbour: 'replace-one' }).bounds().withinApprovals).toBe(8.19);
  });
});
