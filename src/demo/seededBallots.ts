import crypto from 'node:crypto';

/**
 * A seeded stream of numbers in [0, 1) for inventing the demo's ballots, so every run of the demo
 * shows the same sample electorate. SHA-256 in counter mode: a few lines, and node:crypto
 * already provides the hash. It decides only what the invented members tick; keys, codes,
 * receipts and the draw itself use the real random source.
 */
export function seededUniform(seed: string): () => number {
  let counter = 0;
  let block = Buffer.alloc(0);
  let offset = 0;
  return () => {
    if (offset + 6 > block.length) {
      block = crypto.createHash('sha256').update(`${seed}\u0000${counter++}`).digest();
      offset = 0;
    }
    const v = block.readUIntBE(offset, 6); // 48 bits
    offset += 6;
    return v / 2 ** 48;
  };
}

/** One approval ballot per voter: each option is ticked with its own share, independently. */
export function inventBallots(seed: string, shares: readonly number[], voters: number): number[][] {
  const next = seededUniform(seed);
  return Array.from({ length: voters }, () => shares.flatMap((share, i) => (next() < share ? [i] : [])));
}
