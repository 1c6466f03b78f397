import crypto from 'node:crypto';
import { describe, expect, it } from 'vitest';
import {
  SHRED_LAYER_BYTES,
  WrappedKeyInvalid,
  createElectionKeys,
  innerBallot,
  isShredLayered,
  newShredKey,
  openStoredKey,
  openUnderShredKey,
  outerBallot,
  sealUnderShredKey,
  sealWrappedKey,
  unwrapElectionKey,
} from '../../../src/custody/index.ts';
import { sodium } from '../../../src/custody/sodium.ts';

const A = '7d0c1e52-3b4a-4f6e-9a1b-2c3d4e5f6a7b';
const B = '0f1e2d3c-4b5a-4968-8776-a5b4c3d2e1f0';
const random = (n: number) => crypto.randomBytes(n);
const KDF = { memoryKiB: 1024, iterations: 1, parallelism: 1 };

describe('the shred layer (XChaCha20-Poly1305 under a per-election key)', () => {
  it('opens only with its key, for its election and kind, and unchanged', () => {
    const key = newShredKey(random);
    const plain = Buffer.from('a sealed box stands in here');
    const sealed = sealUnderShredKey(key, A, 'ballot', plain, random);
    expect(sealed.length).toBe(plain.length + SHRED_LAYER_BYTES);
    expect(openUnderShredKey(key, A, 'ballot', sealed)).toEqual(plain);
    expect(openUnderShredKey(newShredKey(random), A, 'ballot', sealed)).toBeNull();
    expect(openUnderShredKey(key, B, 'ballot', sealed)).toBeNull();
    expect(openUnderShredKey(key, A, 'wrapped-key', sealed)).toBeNull();
    const bent = Buffer.from(sealed);
    bent[30]! ^= 1;
    expect(openUnderShredKey(key, A, 'ballot', bent)).toBeNull();
    expect(openUnderShredKey(key, A, 'ballot', sealed.subarray(0, 39))).toBeNull();
  });

  it('agrees with libsodium called directly: nonce first, the label, kind and election id as associated data', () => {
    const key = newShredKey(random);
    const sealed = sealUnderShredKey(key, A, 'ballot', Buffer.from('x'), random);
    const ad = Buffer.concat([Buffer.from('veiltally/shred-layer/1/ballot\0'), Buffer.from(A.replace(/-/g, ''), 'hex')]);
    const m = Buffer.alloc(1);
    sodium.crypto_aead_xchacha20poly1305_ietf_decrypt(m, null, sealed.subarray(24), ad, sealed.subarray(0, 24), key);
    expect(m.toString()).toBe('x');
  });

  it('refuses keys of the wrong size and a random source that returns too few bytes', () => {
    expect(() => sealUnderShredKey(Buffer.alloc(31), A, 'ballot', Buffer.from('x'), random)).toThrow(RangeError);
    expect(() => newShredKey(() => Buffer.alloc(16))).toThrow();
  });

  it('wraps the passphrase-wrapped key: without the shred key the passphrase opens nothing', async () => {
    const { wrapped, publicKey } = await createElectionKeys({ passphrase: 'slack water at the boathouse', electionId: A, kdf: KDF });
    const key = newShredKey(random);
    const stored = sealWrappedKey(key, A, wrapped, random);
    expect(isShredLayered(stored)).toBe(true);
    expect(JSON.stringify(stored)).not.toContain(wrapped.ciphertext);
    expect(JSON.stringify(stored)).not.toContain(wrapped.salt);
    const sk = await unwrapElectionKey(openStoredKey(key, A, stored), 'slack water at the boathouse', A);
    const pk = Buffer.alloc(32);
    sodium.crypto_scalarmult_base(pk, sk);
    expect(pk).toEqual(publicKey);
    expect(() => openStoredKey(null, A, stored)).toThrow(WrappedKeyInvalid);
    expect(() => openStoredKey(newShredKey(random), A, stored)).toThrow(WrappedKeyInvalid);
    expect(() => openStoredKey(key, B, stored)).toThrow(WrappedKeyInvalid);
    // An election made before the layer: its bare wrapped key is read as it is.
    expect(isShredLayered(wrapped)).toBe(false);
    expect(openStoredKey(null, A, wrapped)).toEqual(wrapped);
  });

  it('ballots: outer and inner are inverse; a ballot that does not open comes out empty (counted as unreadable)', () => {
    const key = newShredKey(random);
    const box = crypto.randomBytes(66);
    const stored = outerBallot(key, A, box, random);
    expect(innerBallot(key, A, stored)).toEqual(box);
    expect(innerBallot(key, B, stored)).toHaveLength(0);
    expect(outerBallot(null, A, box, random)).toBe(box);
    expect(innerBallot(null, A, box)).toBe(box);
  });
});
