import { z } from 'zod';
import type { RandomSource as RandomBytes } from '../mechanism/random.ts';
import { WrappedKeyInvalid, WrongPassphrase } from './errors.ts';
import { uuidBytes } from './ids.ts';
import { deriveKey, kdfParamsSchema, type KdfParams } from './kdf.ts';
import { checkTallyPassphrase, passphraseBytes } from './passphrase.ts';
import { sodium, sodiumRandom, wipe } from './sodium.ts';

const SALT_BYTES = 16; // RFC 9106 §3.1 recommends 128-bit salts
const b64 = z.string().regex(/^[A-Za-z0-9+/]*={0,2}$/);

/**
 * The election secret key as stored: XChaCha20-Poly1305 (RFC 8439 AEAD with a 192-bit
 * nonce) under an Argon2id key from the tally passphrase. The Argon2id parameters are
 * kept beside it so they can be raised later (rewrapElectionKey) without breaking old keys.
 */
export const wrappedKeySchema = z.object({
  version: z.literal(1),
  kdf: kdfParamsSchema,
  salt: b64,
  nonce: b64,
  ciphertext: b64,
});
export type WrappedKey = z.infer<typeof wrappedKeySchema>;

export function parseWrappedKey(value: unknown): WrappedKey {
  const r = wrappedKeySchema.safeParse(value);
  if (!r.success) throw new WrappedKeyInvalid();
  return r.data;
}

async function wrap(secretKey: Uint8Array, passphrase: string, electionId: string, kdf: KdfParams, random: RandomBytes): Promise<WrappedKey> {
  const salt = Buffer.from(random(SALT_BYTES));
  const nonce = Buffer.from(random(sodium.crypto_aead_xchacha20poly1305_ietf_NPUBBYTES));
  const pw = passphraseBytes(passphrase);
  const key = await deriveKey(pw, salt, kdf);
  try {
    const c = Buffer.alloc(secretKey.byteLength + sodium.crypto_aead_xchacha20poly1305_ietf_ABYTES);
    // The election id is the associated data: a wrapped key copied to another election will not open.
    sodium.crypto_aead_xchacha20poly1305_ietf_encrypt(c, secretKey, uuidBytes(electionId), null, nonce, key);
    return {
      version: 1,
      kdf: { memoryKiB: kdf.memoryKiB, iterations: kdf.iterations, parallelism: kdf.parallelism },
      salt: salt.toString('base64'),
      nonce: nonce.toString('base64'),
      ciphertext: c.toString('base64'),
    };
  } finally {
    wipe(key, pw);
  }
}

/**
 * Makes the election's X25519 key pair (libsodium crypto_box_keypair) and wraps the secret
 * half under the passphrase. `random` supplies salt and nonce; the key pair always comes
 * from libsodium's own generator.
 */
export async function createElectionKeys(input: {
  passphrase: string;
  electionId: string;
  kdf: KdfParams;
  random?: RandomBytes;
}): Promise<{ publicKey: Buffer; wrapped: WrappedKey }> {
  checkTallyPassphrase(input.passphrase);
  const publicKey = Buffer.alloc(sodium.crypto_box_PUBLICKEYBYTES);
  const secretKey = Buffer.alloc(sodium.crypto_box_SECRETKEYBYTES);
  sodium.crypto_box_keypair(publicKey, secretKey);
  try {
    const wrapped = await wrap(secretKey, input.passphrase, input.electionId, input.kdf, input.random ?? sodiumRandom);
    return { publicKey, wrapped };
  } finally {
    wipe(secretKey);
  }
}

/**
 * Returns the election secret key; the caller wipes it when done.
 * Any failure to authenticate (wrong passphrase, wrong election, altered record) is
 * WrongPassphrase and nothing is decrypted: the AEAD tag is checked before any output.
 */
export async function unwrapElectionKey(wrapped: WrappedKey, passphrase: string, electionId: string): Promise<Buffer> {
  const w = parseWrappedKey(wrapped);
  const salt = Buffer.from(w.salt, 'base64');
  const nonce = Buffer.from(w.nonce, 'base64');
  const c = Buffer.from(w.ciphertext, 'base64');
  const abytes = sodium.crypto_aead_xchacha20poly1305_ietf_ABYTES;
  if (
    salt.length !== SALT_BYTES ||
    nonce.length !== sodium.crypto_aead_xchacha20poly1305_ietf_NPUBBYTES ||
    c.length !== sodium.crypto_box_SECRETKEYBYTES + abytes
  ) {
    throw new WrappedKeyInvalid();
  }
  const pw = passphraseBytes(passphrase);
  const key = await deriveKey(pw, salt, w.kdf);
  const secretKey = Buffer.alloc(c.length - abytes);
  try {
    sodium.crypto_aead_xchacha20poly1305_ietf_decrypt(secretKey, null, c, uuidBytes(electionId), nonce, key);
    return secretKey;
  } catch {
    wipe(secretKey);
    throw new WrongPassphrase();
  } finally {
    wipe(key, pw);
  }
}

/** Re-wraps under new Argon2id parameters (or a new passphrase) once the old passphrase is proven. */
export async function rewrapElectionKey(input: {
  wrapped: WrappedKey;
  passphrase: string;
  newPassphrase?: string;
  electionId: string;
  kdf: KdfParams;
  random?: RandomBytes;
}): Promise<WrappedKey> {
  const next = input.newPassphrase ?? input.passphrase;
  checkTallyPassphrase(next);
  const sk = await unwrapElectionKey(input.wrapped, input.passphrase, input.electionId);
  try {
    return await wrap(sk, next, input.electionId, input.kdf, input.random ?? sodiumRandom);
  } finally {
    wipe(sk);
  }
}

/** The X25519 public key belonging to a secret key (checks a key pair still matches). */
export function publicKeyOf(secretKey: Uint8Array): Buffer {
  const pk = Buffer.alloc(sodium.crypto_box_PUBLICKEYBYTES);
  sodium.crypto_scalarmult_base(pk, secretKey);
  return pk;
}
