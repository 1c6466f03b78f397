import type { RandomSource as RandomBytes } from '../mechanism/random.ts';
import { uuidBytes } from './ids.ts';
import { hmacSha256 } from './keyedHash.ts';
import { sodium, wipe } from './sodium.ts';

/**
 * A one-time cast token: 256 random bits put in the member's confirmation form, so that the same
 * submission sent again (after an answer lost to a dropped connection or a crashed server) finds
 * its receipt instead of "already used". Only this browser's page holds the token. Stored are a
 * keyed hash of it (to find the row) and the receipt encrypted under a key derived from the token
 * itself (so the database alone cannot read the receipt). The rows go at the tally's rewrite.
 */
export const CAST_TOKEN_BYTES = 32;
const TOKEN_TEXT = /^[A-Za-z0-9_-]{43}$/;

export function generateCastToken(random: RandomBytes): string {
  const bytes = random(CAST_TOKEN_BYTES);
  if (bytes.byteLength !== CAST_TOKEN_BYTES) throw new Error('random source returned the wrong number of bytes');
  return Buffer.from(bytes).toString('base64url');
}

/** The token's bytes, or null for anything that is not a token (then the cast is not idempotent). */
export function parseCastToken(text: unknown): Buffer | null {
  if (typeof text !== 'string' || !TOKEN_TEXT.test(text)) return null;
  const bytes = Buffer.from(text, 'base64url');
  return bytes.byteLength === CAST_TOKEN_BYTES ? bytes : null;
}

/** Stored form: HMAC-SHA-256 under the instance pepper, domain-separated and bound to the election. */
export function castTokenHash(pepper: Uint8Array, electionId: string, token: Uint8Array): Buffer {
  if (pepper.byteLength < 32) throw new RangeError('the pepper must have at least 32 bytes');
  return hmacSha256(pepper, Buffer.concat([Buffer.from('veiltally/cast-token/1\0', 'utf8'), uuidBytes(electionId), token]));
}

/** HMAC-SHA-256 as a PRF keyed by the 256-bit token (RFC 2104; the key is uniformly random). */
function receiptKey(token: Uint8Array, electionId: string): Buffer {
  return hmacSha256(token, Buffer.concat([Buffer.from('veiltally/receipt-key/1\0', 'utf8'), uuidBytes(electionId)]));
}

const NONCE = 24; // crypto_aead_xchacha20poly1305_ietf_NPUBBYTES
const TAG = 16; // crypto_aead_xchacha20poly1305_ietf_ABYTES

/** nonce ‖ XChaCha20-Poly1305(receipt), associated data = the election id. */
export function sealReceiptForToken(token: Uint8Array, electionId: string, receipt: string, random: RandomBytes): Buffer {
  const key = receiptKey(token, electionId);
  try {
    const nonce = Buffer.from(random(NONCE));
    const m = Buffer.from(receipt, 'ascii');
    const c = Buffer.alloc(m.byteLength + TAG);
    sodium.crypto_aead_xchacha20poly1305_ietf_encrypt(c, m, uuidBytes(electionId), null, nonce, key);
    return Buffer.concat([nonce, c]);
  } finally {
    wipe(key);
  }
}

/** The receipt, or null when these bytes were not sealed with this token for this election. */
export function openReceiptForToken(token: Uint8Array, electionId: string, sealed: Uint8Array): string | null {
  if (sealed.byteLength <= NONCE + TAG) return null;
  const key = receiptKey(token, electionId);
  try {
    const nonce = sealed.subarray(0, NONCE);
    const c = sealed.subarray(NONCE);
    const m = Buffer.alloc(c.byteLength - TAG);
    sodium.crypto_aead_xchacha20poly1305_ietf_decrypt(m, null, c, uuidBytes(electionId), nonce, key);
    return m.toString('ascii');
  } catch {
    return null;
  } finally {
    wipe(key);
  }
}
