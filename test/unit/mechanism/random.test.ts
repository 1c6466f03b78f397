import { describe, expect, it } from 'vitest';
import { uniformBelow, uniformBelowSmall, type RandomSource } from '../../../src/mechanism/index.ts';
import { pooledRandomBytes } from '../../../src/osRandom.ts';
import { chiSquarePValue } from './support/chiSquare.ts';
import { seededRandom } from './support/seededRandom.ts';

/** Serves the given bytes in order, then fails: shows exactly which values a sampler accepts. */
function scripted(bytes: number[]): RandomSource {
  let at = 0;
  return (n) => {
    if (at + n > bytes.length) throw new Error('script exhausted');
    const out = Uint8Array.from(bytes.slice(at, at + n));
    at += n;
    return out;
  };
}

describe('uniformBelow (rejection sampling, no modulo)', () => {
  it('discards out-of-range values instead of reducing them', () => {
    // n = 3 uses the top 2 bits of a byte: 0xff → 3 is out of range and must be discarded (a `% 3`
    // sampler would return 0), then 0x80 → 2 (top two bits) is accepted. Simple discard method.
    expect(uniformBelow(3n, scripted([0xff, 0x80]))).toBe(2n);
    expect(uniformBelowSmall(3, scripted([0xff, 0x80]))).toBe(2);
    // n = 1000 uses 10 of 16 bits (top bits first): 0xffff → 1023 discarded; 0x7d 0x00 → 500.
    expect(uniformBelowSmall(1000, scripted([0xff, 0xff, 0x7d, 0x00]))).toBe(500);
  });

  it('uses the BigInt path above 2^32 and still discards', () => {
    const n = 2n ** 40n + 1n; // 41 bits in 6 bytes; all-ones is ≥ n
    const ones = [0xff, 0xff, 0xff, 0xff, 0xff, 0xff];
    expect(uniformBelow(n, scripted([...ones, 0, 0, 0, 0, 0, 0x80]))).toBe(1n);
  });

  it('consumes no randomness when there is one choice', () => {
    expect(uniformBelow(1n, scripted([]))).toBe(0n);
    expect(uniformBelowSmall(1, scripted([]))).toBe(0);
  });

  // Uniformity: Pearson χ² with @stdlib/stats-chi2gof against the flat law.
  it.each([3, 7, 10, 255, 257, 1000])('is uniform below %i (χ², 100 000 seeded draws)', (n) => {
    const random = seededRandom(1000 + n);
    const counts = new Array(n).fill(0);
    for (let i = 0; i < 100_000; i += 1) counts[uniformBelowSmall(n, random)] += 1;
    const { pValue } = chiSquarePValue(counts, new Array(n).fill(1 / n));
    expect(pValue).toBeGreaterThan(0.001);
  });

  it('the χ² check has power: a modulo-biased sampler below 3 from one byte is rejected', () => {
    // Negative control for the test above: 256 % 3 = 1, so value 0 gets 86/256, others 85/256.
    // With 2 000 000 draws the bias is visible.
    const random = seededRandom(7);
    const counts: number[] = new Array(3).fill(0);
    for (let i = 0; i < 2_000_000; i += 1) {
      const biased = (random(1)[0] as number) % 3;
      counts[biased] = (counts[biased] ?? 0) + 1;
    }
    expect(chiSquarePValue(counts, [1 / 3, 1 / 3, 1 / 3]).pValue).toBeLessThan(0.001);
  });

  it('stays in range for huge bounds', () => {
    const random = seededRandom(3);
    const n = 10n ** 30n + 7n;
    for (let i = 0; i < 1000; i += 1) {
      const v = uniformBelow(n, random);
      expect(v >= 0n && v < n).toBe(true);
    }
  });
});

describe('the operating system’s source the shells pass in (src/osRandom.ts)', () => {
  it('returns the requested number of bytes, fresh each time, across pool refills', () => {
    const cryptoRandom = pooledRandomBytes();
    const seen = new Set<string>();
    for (let i = 0; i < 600; i += 1) {
      const bytes = cryptoRandom(16);
      expect(bytes).toBeInstanceOf(Uint8Array);
      expect(bytes.length).toBe(16);
      seen.add(Buffer.from(bytes).toString('hex'));
    }
    expect(seen.size).toBe(600); // 128-bit values: a repeat would mean reuse
    expect(cryptoRandom(10_000).length).toBe(10_000);
    expect(cryptoRandom(0).length).toBe(0);
  });
});
