import crypto from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { dummyHash, hashPassword, needsRehash, OWASP_PASSWORD_KDF, passwordSchema, verifyPassword } from '../../../src/accounts/passwords.ts';
import { TEST_KDF } from '../../helpers/context.ts';

const random = (n: number) => crypto.randomBytes(n);
const params = (hash: string) =>
  Object.fromEntries(
    /\$argon2id\$v=19\$([^$]+)\$/
      .exec(hash)![1]!
      .split(',')
      .map((kv) => kv.split('=')),
  );

describe('organiser passwords', () => {
  it('hashes with Argon2id at the OWASP minimum: m = 19 MiB, t = 2, p = 1 (OWASP Password Storage Cheat Sheet)', async () => {
    const hash = await hashPassword('choir concert in spring', OWASP_PASSWORD_KDF, random);
    expect(params(hash)).toEqual({ m: '19456', t: '2', p: '1' });
    expect(await verifyPassword(hash, 'choir concert in spring')).toBe(true);
    expect(await verifyPassword(hash, 'choir concert in summer')).toBe(false);
  });

  it('salts every hash (RFC 9106 §3.1: 16-byte salt)', async () => {
    const a = await hashPassword('same password twice', TEST_KDF, random);
    const b = await hashPassword('same password twice', TEST_KDF, random);
    expect(a).not.toBe(b);
    expect(Buffer.from(a.split('$')[4]!, 'base64').length).toBe(16);
  });

  it('treats NFC and NFD spellings of the same password alike (NIST SP 800-63B §5.1.1.2)', async () => {
    const nfc = 'café au lait morning'.normalize('NFC');
    const nfd = nfc.normalize('NFD');
    expect(nfc).not.toBe(nfd);
    expect(await verifyPassword(await hashPassword(nfc, TEST_KDF, random), nfd)).toBe(true);
  });

  it('a damaged stored hash fails closed', async () => {
    expect(await verifyPassword('not a hash', 'anything at all here')).toBe(false);
  });

  it('flags hashes made at another cost for upgrade', async () => {
    const cheap = await hashPassword('upgrade me at sign in', TEST_KDF, random);
    expect(needsRehash(cheap, TEST_KDF)).toBe(false);
    expect(needsRehash(cheap, OWASP_PASSWORD_KDF)).toBe(true);
  });

  it('the dummy hash for unknown emails has the same cost as real ones, and is made once', async () => {
    const d1 = await dummyHash(OWASP_PASSWORD_KDF, random);
    const d2 = await dummyHash(OWASP_PASSWORD_KDF, random);
    expect(d1).toBe(d2);
    expect(params(d1)).toEqual({ m: '19456', t: '2', p: '1' });
  });

  it.each([
    ['eleven char', false],
    ['twelve chars', true],
    ['ééééééééééé', false], // 11 code points
    ['x'.repeat(256), true],
    ['x'.repeat(257), false],
  ])('length rule: %j → %s', (pw, ok) => {
    expect(passwordSchema.safeParse(pw).success).toBe(ok);
  });
});
