import { describe, expect, it } from 'vitest';
import { pooledRandomBytes } from '../../../src/elections/context.ts';

describe('the pooled random source of the live context', () => {
  it('hands out the lengths asked for, never the same bytes twice, across refills and past the pool size', () => {
    const random = pooledRandomBytes(64);
    const seen = new Set<string>();
    for (let i = 0; i < 200; i++) {
      const n = 1 + (i % 24); // refills several times, at uneven offsets
      const b = random(n);
      expect(b.byteLength).toBe(n);
      if (n >= 8) {
        expect(seen.has(Buffer.from(b).toString('hex'))).toBe(false); // 64 random bits: a repeat means reused bytes
        seen.add(Buffer.from(b).toString('hex'));
      }
    }
    expect(random(100).byteLength).toBe(100);
    // What was handed out is a copy: wiping it changes nothing that comes later.
    const a = random(16);
    a.fill(0);
    expect(Buffer.from(random(16)).equals(Buffer.alloc(16))).toBe(false);
  });
});
