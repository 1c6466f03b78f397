import binomialTest from '@stdlib/stats-binomial-test';
import { describe, expect, it } from 'vitest';
import { bernoulliExpMinus, bernoulliRational } from '../../../src/mechanism/index.ts';
import { countingRandom, seededRandom } from './support/seededRandom.ts';

const N = 200_000;

describe('Bernoulli(exp(−γ)), Canonne, Kamath & Steinke 2020, Algorithm 1', () => {
  // Empirical mean against e^(−γ) with an exact two-sided binomial test
  // (@stdlib/stats-binomial-test). Seeds are fixed, so the run is reproducible.
  it.each([
    ['0', 0n, 1n],
    ['1/3', 1n, 3n],
    ['1', 1n, 1n],
    ['5/2', 5n, 2n],
    ['7', 7n, 1n],
  ])('γ = %s: success rate matches e^(−γ) (exact binomial test, 200 000 draws)', (_label, num, den) => {
    const random = seededRandom(Number(num * 31n + den));
    let successes = 0;
    for (let i = 0; i < N; i += 1) if (bernoulliExpMinus({ num, den }, random)) successes += 1;
    const p = Math.exp(-Number(num) / Number(den));
    if (p === 1) {
      expect(successes).toBe(N); // e^0 = 1 exactly: every draw must succeed
      return;
    }
    expect(successes).toBeGreaterThan(0);
    const result = binomialTest(successes, N, { p });
    expect(result.pValue).toBeGreaterThan(0.001);
  });

  it('the binomial check has power: the γ = 1 coin is not mistaken for a 0.36 coin', () => {
    // Negative control: e^(−1) ≈ 0.3679; a sampler off by 0.008 is caught at this size.
    const random = seededRandom(99);
    let successes = 0;
    for (let i = 0; i < N; i += 1) if (bernoulliExpMinus({ num: 1n, den: 1n }, random)) successes += 1;
    expect(binomialTest(successes, N, { p: 0.36 }).pValue).toBeLessThan(0.001);
  });

  it('handles a γ in the millions quickly, without floats (it almost always fails)', () => {
    const { random, bytes } = countingRandom(seededRandom(5));
    let successes = 0;
    for (let i = 0; i < 10_000; i += 1) if (bernoulliExpMinus({ num: 5_000_000n, den: 1n }, random)) successes += 1;
    expect(successes).toBe(0); // P(any success) = 10^4 · e^(−5·10^6): nil
    // Each trial stops at its first failing exp(−1) coin: a few bytes per trial on average.
    expect(bytes() / 10_000).toBeLessThan(10);
  });
});

describe('Bernoulli(p) for rational p, exact', () => {
  it.each([
    [1n, 3n],
    [2n, 7n],
    [999n, 1000n],
  ])('p = %d/%d matches an exact binomial test', (num, den) => {
    const random = seededRandom(Number(num + den));
    let successes = 0;
    for (let i = 0; i < N; i += 1) if (bernoulliRational(num, den, random)) successes += 1;
    expect(binomialTest(successes, N, { p: Number(num) / Number(den) }).pValue).toBeGreaterThan(0.001);
  });

  it('is decided by U < num for U uniform below den: with den = 3, U = 0 succeeds for p = 1/3 and U = 1 fails', () => {
    const byte = (b: number) => () => Uint8Array.of(b);
    expect(bernoulliRational(1n, 3n, byte(0x00))).toBe(true); // U = 0
    expect(bernoulliRational(1n, 3n, byte(0x40))).toBe(false); // U = 1 (top two bits 01)
    expect(bernoulliRational(2n, 3n, byte(0x40))).toBe(true);
  });

  it('p = 0 and p = 1 are certain and use no randomness', () => {
    const { random, bytes } = countingRandom(seededRandom(1));
    expect(bernoulliRational(0n, 5n, random)).toBe(false);
    expect(bernoulliRational(5n, 5n, random)).toBe(true);
    expect(bytes()).toBe(0);
  });
});
