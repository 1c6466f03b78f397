/**
 * Returns exactly `byteCount` uniformly random bytes. Passed in, so the core does no I/O of its own:
 * the operating system's source is src/osRandom.ts, which the shells hand to the core; tests pass a seeded one.
 */
export type RandomSource = (byteCount: number) => Uint8Array;

function readBytes(random: RandomSource, count: number): Uint8Array {
  const bytes = random(count);
  if (!(bytes instanceof Uint8Array) || bytes.length !== count) {
    throw new TypeError(`random source returned ${bytes?.length ?? 'no'} bytes, ${count} were asked for`);
  }
  return bytes;
}

/**
 * Uniform integer in [0, n) by rejection: draw just enough bits to cover n − 1,
 * retry when the value is ≥ n. Each try succeeds with probability > 1/2, and no
 * `%` is used, so there is no modulo bias. This is the "simple discard method"
 * of NIST SP 800-90A Rev. 1, Appendix A.5.1 (section number cited from memory).
 */
export function uniformBelow(n: bigint, random: RandomSource): bigint {
  if (typeof n !== 'bigint' || n < 1n) throw new RangeError('uniformBelow needs a bound n ≥ 1');
  if (n === 1n) return 0n;
  const top = n - 1n;
  if (top <= 0xffffffffn) return BigInt(uniformBelowSmall(Number(n), random));
  const bits = top.toString(2).length;
  const byteCount = Math.ceil(bits / 8);
  const excess = BigInt(byteCount * 8 - bits);
  for (;;) {
    const bytes = readBytes(random, byteCount);
    let value = 0n;
    for (const b of bytes) value = (value << 8n) | BigInt(b);
    value >>= excess;
    if (value < n) return value;
  }
}

/**
 * The same discard method for n ≤ 2^32, on integer-valued JS numbers: every
 * operation below is exact integer arithmetic under 2^32, so no rounding occurs.
 */
export function uniformBelowSmall(n: number, random: RandomSource): number {
  if (!Number.isSafeInteger(n) || n < 1 || n > 0x100000000) {
    throw new RangeError('uniformBelowSmall needs an integer bound 1 ≤ n ≤ 2^32');
  }
  if (n === 1) return 0;
  const bits = 32 - Math.clz32(n - 1);
  const byteCount = (bits + 7) >>> 3;
  const excess = byteCount * 8 - bits;
  for (;;) {
    const bytes = random(byteCount);
    if (bytes.length !== byteCount) readBytes(() => bytes, byteCount); // throws with the reason
    let value = 0;
    for (let i = 0; i < byteCount; i += 1) value = value * 256 + (bytes[i] as number);
    // value < 2^32, so the unsigned shift is exact and keeps the top `bits` bits.
    value >>>= excess;
    if (value < n) return value;
  }
}
