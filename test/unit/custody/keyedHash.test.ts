import crypto from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { codeHash, hmacSha256, receiptHash } from '../../../src/custody/keyedHash.ts';

describe('keyed hashes of codes and receipts (HMAC-SHA-256, RFC 2104)', () => {
  const pepper = crypto.randomBytes(32);
  const election = crypto.randomUUID();

  it('is the HMAC of a domain tag, the election id bytes and the canonical text', () => {
    const expected = hmacSha256(
      pepper,
      Buffer.concat([Buffer.from('veiltally/code/1\0'), Buffer.from(election.replace(/-/g, ''), 'hex'), Buffer.from('ABC')]),
    );
    expect(codeHash(pepper, election, 'ABC').equals(expected)).toBe(true);
  });

  it('separates codes from receipts, elections from each other and peppers from each other', () => {
    const base = codeHash(pepper, election, '0123456789');
    expect(receiptHash(pepper, election, '0123456789').equals(base)).toBe(false);
    expect(codeHash(pepper, crypto.randomUUID(), '0123456789').equals(base)).toBe(false);
    expect(codeHash(crypto.randomBytes(32), election, '0123456789').equals(base)).toBe(false);
    expect(codeHash(pepper, election, '0123456789').equals(base)).toBe(true);
  });

  it('refuses a short pepper', () => {
    expect(() => codeHash(Buffer.alloc(16), election, 'A')).toThrow(RangeError);
  });
});
