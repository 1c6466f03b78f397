import crypto from 'node:crypto';
import type { RandomSource } from './mechanism/random.ts';

/**
 * The one source of operating-system randomness: node:crypto's CSPRNG, drawn 4 KiB at a time. Each
 * randomBytes call costs a trip into OpenSSL, and both a cast (receipt, ballot id, nonces) and a draw
 * (one or two bytes per coin) ask for small amounts many times, which showed in their profiles; Node's
 * own crypto.randomUUID batches the same way. Every byte is handed out once, as a copy (callers may wipe
 * it), and the handed-out part of the pool is zeroed; requests larger than the pool go straight through.
 * The shells make one (liveContext, the command line) and pass it in: the mechanism and custody cores
 * take randomness as an argument and hold none.
 */
export function pooledRandomBytes(poolSize = 4096): RandomSource {
  const pool = Buffer.alloc(poolSize);
  let at = poolSize;
  return (n) => {
    if (!Number.isSafeInteger(n) || n < 0) throw new RangeError('byteCount must be a whole number ≥ 0');
    if (n > poolSize) return crypto.randomBytes(n);
    if (at + n > poolSize) {
      crypto.randomFillSync(pool);
      at = 0;
    }
    const out = Buffer.from(pool.subarray(at, at + n));
    pool.fill(0, at, at + n);
    at += n;
    return out;
  };
}
