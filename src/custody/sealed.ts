import type { RandomSource as RandomBytes } from '../mechanism/random.ts';
import { uuidBytes } from './ids.ts';
import { hmacSha256 } from './keyedHash.ts';
import { sodium, wipe } from './sodium.ts';

/**
 * Short texts sealed for one election under a 256-bit key: nonce ‖ XChaCha20-Poly1305(text), with
 * the election id as associated data, so a sealed text opens only for the election it was made for.
 * Used for receipts kept against a cast token and for the member's cookies (web/routes/vote).
 * The per-election key's label predates this module's other uses; it stays, so stored rows open.
 */
const NONCE = 24; // crypto_aead_xchacha20poly1305_ietf_NPUBBYTES
const TAG = 16; // crypto_aead_xchacha20poly1305_ietf_ABYTES

/** HMAC-SHA-256 as a PRF keyed by a uniformly random 256-bit key (RFC 2104). */
function electionKey(key: Uint8Array, electionId: string): Buffer {
  return hmacSha256(key, Buffer.concat([Buffer.from('veiltally/receipt-key/1\0', 'utf8'), uuidBytes(electionId)]));
}

export function sealForElection(key: Uint8Array, electionId: string, text: string, random: RandomBytes): Buffer {
  const k = electionKey(key, electionId);
  try {
    const nonce = Buffer.from(random(NONCE));
    if (nonce.byteLength !== NONCE) throw new Error('random source returned the wrong number of bytes');
    const m = Buffer.from(text, 'utf8');
    const c = Buffer.alloc(m.byteLength + TAG);
    sodium.crypto_aead_xchacha20poly1305_ietf_encrypt(c, m, uuidBytes(electionId), null, nonce, k);
    return Buffer.concat([nonce, c]);
  } finally {
    wipe(k);
  }
}

/** The text, or null when these bytes were not sealed with this key for this election (or were changed). */
export function openForElection(key: Uint8Array, electionId: string, sealed: Uint8Array): string | null {
  if (sealed.byteLength <= NONCE + TAG) return null;
  const k = electionKey(key, electionId);
  try {
    const nonce = sealed.subarray(0, NONCE);
    const c = sealed.subarray(NONCE);
    const m = Buffer.alloc(c.byteLength - TAG);
    sodium.crypto_aead_xchacha20poly1305_ietf_decrypt(m, null, c, uuidBytes(electionId), nonce, k);
    return m.toString('utf8');
  } catch {
    return null;
  } finally {
    wipe(k);
  }
}
