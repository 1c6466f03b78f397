import { z } from 'zod';
import type { RandomSource as RandomBytes } from '../mechanism/random.ts';
import { WrappedKeyInvalid } from './errors.ts';
import { uuidBytes } from './ids.ts';
import { parseWrappedKey, type WrappedKey } from './keys.ts';
import { sodium } from './sodium.ts';

/**
 * The shred layer (DESIGN §8, crypto-shredding). Everything an election stores that would let a
 * holder of the tally passphrase open ballots (the wrapped key and every sealed ballot) is sealed
 * once more under a per-election key kept outside the database's rows, in a key file. The
 * write-ahead log, archives and backups keep only what this layer made; deleting the key file
 * makes all of it noise, whatever else survives.
 * The layer is XChaCha20-Poly1305 (RFC 8439 AEAD with a 192-bit nonce): nonce ‖ ciphertext ‖ tag,
 * with the label, the kind of value and the election id as associated data, so a value cannot be
 * moved to another election or passed off as the other kind. Keys and nonces come from the caller.
 */
export const SHRED_KEY_BYTES = 32; // crypto_aead_xchacha20poly1305_ietf_KEYBYTES
const NONCE = 24; // crypto_aead_xchacha20poly1305_ietf_NPUBBYTES
const TAG = 16; // crypto_aead_xchacha20poly1305_ietf_ABYTES
/** Bytes the layer adds to each value. */
export const SHRED_LAYER_BYTES = NONCE + TAG;

export type ShredLayerKind = 'wrapped-key' | 'ballot';

function associatedData(kind: ShredLayerKind, electionId: string): Buffer {
  return Buffer.concat([Buffer.from(`veiltally/shred-layer/1/${kind}\0`, 'utf8'), uuidBytes(electionId)]);
}

function checkKey(key: Uint8Array): void {
  if (key.byteLength !== SHRED_KEY_BYTES) throw new RangeError('a shred key is 32 bytes');
}

/** A fresh per-election key from the caller's random source. */
export function newShredKey(random: RandomBytes): Buffer {
  const k = Buffer.from(random(SHRED_KEY_BYTES));
  if (k.byteLength !== SHRED_KEY_BYTES) throw new Error('random source returned the wrong number of bytes');
  return k;
}

export function sealUnderShredKey(key: Uint8Array, electionId: string, kind: ShredLayerKind, plain: Uint8Array, random: RandomBytes): Buffer {
  checkKey(key);
  const nonce = Buffer.from(random(NONCE));
  if (nonce.byteLength !== NONCE) throw new Error('random source returned the wrong number of bytes');
  const out = Buffer.alloc(NONCE + plain.byteLength + TAG);
  nonce.copy(out, 0);
  sodium.crypto_aead_xchacha20poly1305_ietf_encrypt(out.subarray(NONCE), plain, associatedData(kind, electionId), null, nonce, key);
  return out;
}

/** The inner value, or null when these bytes were not sealed under this key, for this election and kind (or were changed). */
export function openUnderShredKey(key: Uint8Array, electionId: string, kind: ShredLayerKind, sealed: Uint8Array): Buffer | null {
  checkKey(key);
  if (sealed.byteLength < NONCE + TAG) return null;
  const m = Buffer.alloc(sealed.byteLength - NONCE - TAG);
  try {
    sodium.crypto_aead_xchacha20poly1305_ietf_decrypt(
      m,
      null,
      sealed.subarray(NONCE),
      associatedData(kind, electionId),
      sealed.subarray(0, NONCE),
      key,
    );
    return m;
  } catch {
    return null;
  }
}

/**
 * The wrapped key as stored once the shred layer is in use: version 2, one base64 string. Version 1
 * (the bare WrappedKey) is what elections made before the layer hold; they keep opening, unprotected
 * against the write-ahead log (the README's threat model says so).
 */
export const storedKeySchema = z.object({ version: z.literal(2), sealed: z.string().regex(/^[A-Za-z0-9+/]*={0,2}$/) });
export type StoredKey = z.infer<typeof storedKeySchema>;

export function sealWrappedKey(key: Uint8Array, electionId: string, wrapped: WrappedKey, random: RandomBytes): StoredKey {
  const json = Buffer.from(JSON.stringify(parseWrappedKey(wrapped)), 'utf8');
  return { version: 2, sealed: sealUnderShredKey(key, electionId, 'wrapped-key', json, random).toString('base64') };
}

/** True when a stored wrapped key is under the shred layer (so are the election's ballots). */
export function isShredLayered(stored: unknown): boolean {
  return storedKeySchema.safeParse(stored).success;
}

/**
 * The passphrase-wrapped key inside a stored value. `key` is the election's shred key, or null
 * for an election made before the layer (version 1 is returned as it is). WrappedKeyInvalid when
 * the layer does not open: a key file that is not this election's, or an altered row.
 */
export function openStoredKey(key: Uint8Array | null, electionId: string, stored: unknown): WrappedKey {
  const layered = storedKeySchema.safeParse(stored);
  if (!layered.success) return parseWrappedKey(stored);
  if (key === null) throw new WrappedKeyInvalid();
  const json = openUnderShredKey(key, electionId, 'wrapped-key', Buffer.from(layered.data.sealed, 'base64'));
  if (json === null) throw new WrappedKeyInvalid();
  try {
    return parseWrappedKey(JSON.parse(json.toString('utf8')));
  } catch {
    throw new WrappedKeyInvalid();
  }
}

/**
 * A stored ballot as the tally reads it: the sealed box inside the layer, or (key null, an
 * election made before the layer) the stored bytes themselves. Bytes that do not open under the
 * layer come back empty, which openAndCount counts as unreadable, so nothing is skipped silently.
 */
export function innerBallot(key: Uint8Array | null, electionId: string, stored: Buffer): Buffer {
  if (key === null) return stored;
  return openUnderShredKey(key, electionId, 'ballot', stored) ?? Buffer.alloc(0);
}

/** A sealed box as stored: under the layer when the election has a shred key. */
export function outerBallot(key: Uint8Array | null, electionId: string, sealedBox: Buffer, random: RandomBytes): Buffer {
  return key === null ? sealedBox : sealUnderShredKey(key, electionId, 'ballot', sealedBox, random);
}
