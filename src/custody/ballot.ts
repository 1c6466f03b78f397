import { BallotUnreadable } from './errors.ts';
import { uuidBytes } from './ids.ts';
import { sodium, wipe } from './sodium.ts';

/**
 * Plaintext ballot, before sealing:
 *   byte 0        format version (1)
 *   bytes 1..16   election id (UUID bytes), checked on opening
 *   bytes 17..    bitset of approved options, bit i = option position i,
 *                 least significant bit first, ceil(d / 8) bytes, unused high bits zero
 * A bitset has one length for every ballot of an election whatever is ticked, so every
 * ciphertext of an election has the same size (the property DESIGN §5 asks for).
 */
export const BALLOT_VERSION = 1;
const HEADER = 17;
/**
 * The most options a sealed ballot's bitset encodes; far above any real approval ballot, keeps the
 * encoding small. Not the draw's limit (MAX_DRAW_OPTIONS in src/mechanism/draw.ts).
 */
export const MAX_SEALED_OPTIONS = 4096;

export function ballotLength(optionCount: number): number {
  if (!Number.isInteger(optionCount) || optionCount < 1 || optionCount > MAX_SEALED_OPTIONS) {
    throw new RangeError('option count out of range');
  }
  return HEADER + Math.ceil(optionCount / 8);
}

export function sealedLength(optionCount: number): number {
  return ballotLength(optionCount) + sodium.crypto_box_SEALBYTES;
}

/** Approvals must already be validated as distinct positions in 0..d-1. */
export function encodeBallot(electionId: string, optionCount: number, approvals: readonly number[]): Buffer {
  const out = Buffer.alloc(ballotLength(optionCount));
  out[0] = BALLOT_VERSION;
  uuidBytes(electionId).copy(out, 1);
  for (const p of approvals) {
    if (!Number.isInteger(p) || p < 0 || p >= optionCount) throw new RangeError('approval out of range');
    out[HEADER + (p >> 3)]! |= 1 << (p & 7);
  }
  return out;
}

/** crypto_box_seal: an anonymous sender, only the election secret key opens it. */
export function sealBallot(publicKey: Uint8Array, plaintext: Uint8Array): Buffer {
  const c = Buffer.alloc(plaintext.byteLength + sodium.crypto_box_SEALBYTES);
  sodium.crypto_box_seal(c, plaintext, publicKey);
  return c;
}

export function encodeAndSeal(publicKey: Uint8Array, electionId: string, optionCount: number, approvals: readonly number[]): Buffer {
  const plain = encodeBallot(electionId, optionCount, approvals);
  try {
    return sealBallot(publicKey, plain);
  } finally {
    wipe(plain);
  }
}

/** crypto_box_seal_open; null when it does not authenticate under this key pair. Caller wipes the result. */
export function openSealedBox(sealed: Uint8Array, publicKey: Uint8Array, secretKey: Uint8Array): Buffer | null {
  if (sealed.byteLength < sodium.crypto_box_SEALBYTES) return null;
  const m = Buffer.alloc(sealed.byteLength - sodium.crypto_box_SEALBYTES);
  if (sodium.crypto_box_seal_open(m, sealed, publicKey, secretKey)) return m;
  return null;
}

/** What is needed to open ballots of one election; reuse it across a whole tally. */
export interface OpeningKey {
  publicKey: Uint8Array;
  secretKey: Uint8Array;
  electionId: Uint8Array; // 16 bytes
  optionCount: number;
}

export function openingKey(publicKey: Uint8Array, secretKey: Uint8Array, electionId: string, optionCount: number): OpeningKey {
  return { publicKey, secretKey, electionId: uuidBytes(electionId), optionCount };
}

/**
 * Opens one sealed ballot and adds its approvals to `counts` (length d). The ballot is
 * fully checked first (authentic, version, election id, length, no bit at or beyond d),
 * so a bad ballot changes nothing. Throws BallotUnreadable on any failure.
 */
export function openAndCount(k: OpeningKey, sealed: Uint8Array, counts: Uint32Array | number[]): void {
  const len = ballotLength(k.optionCount);
  if (sealed.byteLength !== len + sodium.crypto_box_SEALBYTES) throw new BallotUnreadable();
  const m = openSealedBox(sealed, k.publicKey, k.secretKey);
  if (m === null) throw new BallotUnreadable();
  try {
    if (m[0] !== BALLOT_VERSION) throw new BallotUnreadable();
    if (!sodium.sodium_memcmp(m.subarray(1, HEADER), k.electionId)) throw new BallotUnreadable();
    const spare = k.optionCount & 7;
    if (spare !== 0 && m[len - 1]! >> spare !== 0) throw new BallotUnreadable();
    for (let i = 0; i < k.optionCount; i++) {
      if ((m[HEADER + (i >> 3)]! >> (i & 7)) & 1) counts[i]! += 1;
    }
  } finally {
    wipe(m);
  }
}

/** Opens one ballot to its approved positions (tests and checks; the tally uses openAndCount). */
export function openBallot(k: OpeningKey, sealed: Uint8Array): number[] {
  const counts = new Uint32Array(k.optionCount);
  openAndCount(k, sealed, counts);
  const approvals: number[] = [];
  counts.forEach((c, i) => {
    if (c) approvals.push(i);
  });
  return approvals;
}
