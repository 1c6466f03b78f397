import type { RandomSource as RandomBytes } from '../mechanism/random.ts';
import { uuidBytes } from './ids.ts';
import { hmacSha256 } from './keyedHash.ts';
import { openForElection, sealForElection } from './sealed.ts';

/**
 * A one-time cast token: 256 random bits made when the member reaches the confirmation step and
 * kept in their browser's sealed step cookie, so that the same cast sent again (after an answer
 * lost to a dropped connection or a crashed server) finds its receipt instead of "already used".
 * Only this browser holds the token. Stored are a
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

/**
 * The receipt, sealed under a key derived from the token itself (sealed.ts): the row in the
 * database alone cannot be opened.
 */
export function sealReceiptForToken(token: Uint8Array, electionId: string, receipt: string, random: RandomBytes): Buffer {
  return sealForElection(token, electionId, receipt, random);
}

/** The receipt, or null when these bytes were not sealed with this token for this election. */
export function openReceiptForToken(token: Uint8Array, electionId: string, sealed: Uint8Array): string | null {
  return openForElection(token, electionId, sealed);
}
