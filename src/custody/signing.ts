import { createHash } from 'node:crypto';
import { sodium, wipe } from './sodium.ts';

/**
 * The instance's Ed25519 key (RFC 8032 §5.1) for signing published statements, derived
 * from the 32-byte seed in the instance secrets with crypto_sign_seed_keypair.
 */
function keypair(seed: Uint8Array): { publicKey: Buffer; secretKey: Buffer } {
  if (seed.byteLength !== sodium.crypto_sign_SEEDBYTES) throw new RangeError('the signing seed must have 32 bytes');
  const publicKey = Buffer.alloc(sodium.crypto_sign_PUBLICKEYBYTES);
  const secretKey = Buffer.alloc(sodium.crypto_sign_SECRETKEYBYTES);
  sodium.crypto_sign_seed_keypair(publicKey, secretKey, seed);
  return { publicKey, secretKey };
}

export function publicKeyFromSeed(seed: Uint8Array): Buffer {
  const { publicKey, secretKey } = keypair(seed);
  wipe(secretKey);
  return publicKey;
}

/** Detached 64-byte signature over the exact statement bytes. */
export function signStatement(bytes: Uint8Array, seed: Uint8Array): Buffer {
  const { secretKey } = keypair(seed);
  try {
    const sig = Buffer.alloc(sodium.crypto_sign_BYTES);
    sodium.crypto_sign_detached(sig, bytes, secretKey);
    return sig;
  } finally {
    wipe(secretKey);
  }
}

export function verifyStatement(bytes: Uint8Array, signature: Uint8Array, publicKey: Uint8Array): boolean {
  if (signature.byteLength !== sodium.crypto_sign_BYTES) return false;
  if (publicKey.byteLength !== sodium.crypto_sign_PUBLICKEYBYTES) return false;
  return sodium.crypto_sign_verify_detached(signature, bytes, publicKey);
}

/** SHA-256 of the 32-byte public key, in hex: what the fingerprint and the key id are cut from. */
function keyDigest(publicKey: Uint8Array): string {
  if (publicKey.byteLength !== sodium.crypto_sign_PUBLICKEYBYTES) throw new RangeError('an Ed25519 public key has 32 bytes');
  return createHash('sha256').update(publicKey).digest('hex');
}

/** The key id statements name: the first 16 hex digits (64 bits) of SHA-256(public key). */
export function signingKeyId(publicKey: Uint8Array): string {
  return keyDigest(publicKey).slice(0, 16);
}

/** The full SHA-256 of the public key in groups of four hex digits, for people to compare by eye. */
export function keyFingerprint(publicKey: Uint8Array): string {
  return keyDigest(publicKey).match(/.{4}/g)!.join(' ');
}
