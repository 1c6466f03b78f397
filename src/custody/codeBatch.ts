import { canonicalFromBytes, formatCode, CODE_BYTES, type BallotCode } from './codes.ts';
import { uuidBytes } from './ids.ts';
import { hmacSha256 } from './keyedHash.ts';

/**
 * A batch of ballot codes drawn from one 256-bit random seed: code i is the first 80 bits of
 * HMAC-SHA-256(seed, "veiltally/code-batch/1" ‖ election id ‖ i). HMAC is a pseudo-random
 * function (RFC 2104; Bellare, "New Proofs for NMAC and HMAC", CRYPTO 2006), so to anyone
 * without the seed the codes are as unpredictable as codes drawn one by one.
 *
 * Why: the organiser's page after issuing codes for a CSV file keeps only the seed (in a
 * hidden field of a no-store page, never stored or logged), so the file can be downloaded from
 * a page that also shows the updated counts, however many codes the batch holds. The seed is as
 * secret as the codes it makes.
 */
export const BATCH_SEED_BYTES = 32;
const DOMAIN = Buffer.from('veiltally/code-batch/1\0', 'utf8');

export function codeFromSeed(seed: Uint8Array, electionId: string, index: number): BallotCode {
  if (seed.byteLength !== BATCH_SEED_BYTES) throw new RangeError('a batch seed has 32 bytes');
  if (!Number.isInteger(index) || index < 0 || index > 0xffffffff) throw new RangeError('bad code index');
  const i = Buffer.alloc(4);
  i.writeUInt32BE(index);
  const canonical = canonicalFromBytes(hmacSha256(seed, Buffer.concat([DOMAIN, uuidBytes(electionId), i])).subarray(0, CODE_BYTES));
  return { canonical, display: formatCode(canonical) };
}

export function codesFromSeed(seed: Uint8Array, electionId: string, count: number): BallotCode[] {
  return Array.from({ length: count }, (_, i) => codeFromSeed(seed, electionId, i));
}

/** The seed as it travels in a form field: base64url, 43 characters. */
export const encodeBatchSeed = (seed: Uint8Array): string => Buffer.from(seed).toString('base64url');

export function decodeBatchSeed(text: string): Buffer | null {
  if (typeof text !== 'string' || !/^[A-Za-z0-9_-]{43}$/.test(text)) return null;
  const seed = Buffer.from(text, 'base64url');
  return seed.length === BATCH_SEED_BYTES ? seed : null;
}
