import crypto from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { openForElection, sealForElection } from '../../../src/custody/sealed.ts';
import { openReceiptForToken, sealReceiptForToken } from '../../../src/custody/castToken.ts';

const random = (n: number) => crypto.randomBytes(n);
const A = '3f2a1c9e-7b4d-4e8a-9c1f-0a2b3c4d5e6f';
const B = '3f2a1c9e-7b4d-4e8a-9c1f-0a2b3c4d5e70';

/** Texts sealed for one election (XChaCha20-Poly1305, the election id as associated data). */
describe('sealForElection / openForElection', () => {
  const key = crypto.randomBytes(32);

  it('opens what it sealed, with a fresh nonce each time', () => {
    const text = '{"step":"confirm","approvals":[0,3]}.1780000000000';
    const one = sealForElection(key, A, text, random);
    const two = sealForElection(key, A, text, random);
    expect(openForElection(key, A, one)).toBe(text);
    expect(one.equals(two)).toBe(false);
    expect(one.toString('latin1')).not.toContain('approvals');
  });

  it('refuses another election, another key, any changed byte and a cut value', () => {
    const sealed = sealForElection(key, A, 'receipt-text', random);
    expect(openForElection(key, B, sealed)).toBeNull();
    expect(openForElection(crypto.randomBytes(32), A, sealed)).toBeNull();
    for (const i of [0, 23, 24, sealed.length - 1]) {
      const changed = Buffer.from(sealed);
      changed[i]! ^= 1;
      expect(openForElection(key, A, changed), `byte ${i}`).toBeNull();
    }
    expect(openForElection(key, A, sealed.subarray(0, 40))).toBeNull();
    expect(openForElection(key, A, Buffer.alloc(0))).toBeNull();
  });

  it('is the same format the cast tokens’ stored receipts use, so rows sealed before still open', () => {
    // Sealed by the code before this module existed (castToken.ts at that commit), token 32 × 0x07, nonce 24 × 0x09.
    const before = Buffer.from('090909090909090909090909090909090909090909090909dc06658819c22fc94293f17e84d0b8d1623e974bfa4eab2c43f3', 'hex');
    expect(openReceiptForToken(Buffer.alloc(32, 7), A, before)).toBe('ABCDE12345');
    expect(sealForElection(Buffer.alloc(32, 7), A, 'ABCDE12345', (n) => Buffer.alloc(n, 9)).equals(before)).toBe(true);
    const token = crypto.randomBytes(32);
    expect(openForElection(token, A, sealReceiptForToken(token, A, 'ABCDE12345', random))).toBe('ABCDE12345');
    expect(openReceiptForToken(token, A, sealForElection(token, A, 'ABCDE12345', random))).toBe('ABCDE12345');
  });
});
