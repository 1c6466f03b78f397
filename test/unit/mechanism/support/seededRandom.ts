import { xoroshiro128plus } from 'pure-rand/generator/xoroshiro128plus';
import type { RandomSource } from '../../../../src/mechanism/index.ts';

/**
 * A deterministic RandomSource for tests, from pure-rand's xoroshiro128+
 * (Blackman & Vigna). Each 32-bit output is split into four bytes, served in
 * order, so a seed always replays the same draws.
 */
export function seededRandom(seed: number): RandomSource {
  const rng = xoroshiro128plus(seed);
  let word = 0;
  let left = 0;
  return (byteCount) => {
    const out = new Uint8Array(byteCount);
    for (let i = 0; i < byteCount; i += 1) {
      if (left === 0) {
        word = rng.next() >>> 0;
        left = 4;
      }
      out[i] = word & 0xff;
      word >>>= 8;
      left -= 1;
    }
    return out;
  };
}

/** Counts how many bytes a source hands out, to show where randomness is (not) consumed. */
export function countingRandom(inner: RandomSource): { random: RandomSource; bytes: () => number } {
  let total = 0;
  return {
    random: (n) => {
      total += n;
      return inner(n);
    },
    bytes: () => total,
  };
}
