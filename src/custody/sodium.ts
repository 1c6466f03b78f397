import { createRequire } from 'node:module';

/**
 * The part of libsodium (through sodium-native) that custody uses, typed here because the
 * package ships no declarations. Loaded with require so it works in the main thread, in
 * tally worker threads, under tsx and under vitest alike.
 */
export interface Sodium {
  readonly crypto_box_PUBLICKEYBYTES: number;
  readonly crypto_box_SECRETKEYBYTES: number;
  readonly crypto_box_SEALBYTES: number;
  readonly crypto_aead_xchacha20poly1305_ietf_KEYBYTES: number;
  readonly crypto_aead_xchacha20poly1305_ietf_NPUBBYTES: number;
  readonly crypto_aead_xchacha20poly1305_ietf_ABYTES: number;
  readonly crypto_sign_PUBLICKEYBYTES: number;
  readonly crypto_sign_SECRETKEYBYTES: number;
  readonly crypto_sign_SEEDBYTES: number;
  readonly crypto_sign_BYTES: number;

  crypto_box_keypair(pk: Uint8Array, sk: Uint8Array): void;
  crypto_box_seal(c: Uint8Array, m: Uint8Array, pk: Uint8Array): void;
  /** false when the ciphertext does not open with this key pair. */
  crypto_box_seal_open(m: Uint8Array, c: Uint8Array, pk: Uint8Array, sk: Uint8Array): boolean;
  crypto_scalarmult_base(q: Uint8Array, n: Uint8Array): void;

  crypto_aead_xchacha20poly1305_ietf_encrypt(
    c: Uint8Array,
    m: Uint8Array,
    ad: Uint8Array | null,
    nsec: null,
    npub: Uint8Array,
    k: Uint8Array,
  ): number;
  /** Throws when the tag does not verify. */
  crypto_aead_xchacha20poly1305_ietf_decrypt(
    m: Uint8Array,
    nsec: null,
    c: Uint8Array,
    ad: Uint8Array | null,
    npub: Uint8Array,
    k: Uint8Array,
  ): number;

  crypto_sign_seed_keypair(pk: Uint8Array, sk: Uint8Array, seed: Uint8Array): void;
  crypto_sign_detached(sig: Uint8Array, m: Uint8Array, sk: Uint8Array): void;
  crypto_sign_verify_detached(sig: Uint8Array, m: Uint8Array, pk: Uint8Array): boolean;

  randombytes_buf(buf: Uint8Array): void;
  sodium_memzero(buf: ArrayBufferView): void;
  sodium_memcmp(a: Uint8Array, b: Uint8Array): boolean;
}

export const sodium = createRequire(import.meta.url)('sodium-native') as Sodium;

/** Overwrites secret material we no longer need (libsodium's sodium_memzero is not optimised away). */
export function wipe(...buffers: Array<ArrayBufferView | null | undefined>): void {
  for (const b of buffers) if (b && b.byteLength > 0) sodium.sodium_memzero(b);
}

/** Bytes from libsodium's CSPRNG, the default when no random source is passed in. */
export function sodiumRandom(byteCount: number): Uint8Array {
  const out = Buffer.alloc(byteCount);
  sodium.randombytes_buf(out);
  return out;
}
