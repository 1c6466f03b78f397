import type { RandomSource as RandomBytes } from '../mechanism/random.ts';
import { CodeMalformed, CodeTypo, ReceiptMalformed } from './errors.ts';
import {
  ALPHABET,
  CHECK_ALPHABET,
  bigIntToBytes,
  bytesToBigInt,
  checkSymbol,
  decodeInteger,
  encodeInteger,
  normaliseSymbols,
} from './crockford.ts';

/**
 * Ballot codes: 128 random bits, so guessing a live code is hopeless however many tries
 * are made (common practice for bearer secrets), written as 26 Crockford base32 symbols
 * plus one check symbol, 27 in all, displayed in groups of four.
 */
export const CODE_BYTES = 16;
const DATA_SYMBOLS = 26; // ceil(128 / 5); the first symbol carries only 3 bits
export const CODE_SYMBOLS = DATA_SYMBOLS + 1;
const MAX_CODE = 1n << 128n;

export interface BallotCode {
  /** What the member sees: groups of four separated by hyphens. */
  display: string;
  /** 27 upper-case symbols, no separators; input to the keyed hash. */
  canonical: string;
}

export function canonicalFromBytes(bytes: Uint8Array): string {
  if (bytes.byteLength !== CODE_BYTES) throw new RangeError('a code has 16 bytes');
  const v = bytesToBigInt(bytes);
  return encodeInteger(v, DATA_SYMBOLS) + checkSymbol(v);
}

export function formatCode(canonical: string): string {
  return canonical.match(/.{1,4}/g)!.join('-');
}

export function generateCode(random: RandomBytes): BallotCode {
  const bytes = random(CODE_BYTES);
  if (bytes.byteLength !== CODE_BYTES) throw new Error('random source returned the wrong number of bytes');
  const canonical = canonicalFromBytes(bytes);
  return { display: formatCode(canonical), canonical };
}

/**
 * Canonical form of a typed code. Wrong length or characters: CodeMalformed. Right shape
 * but the check symbol disagrees: CodeTypo, decided here before any database lookup.
 */
export function normaliseCode(input: string): string {
  if (typeof input !== 'string' || input.length > 200) throw new CodeMalformed();
  const s = normaliseSymbols(input);
  if (s.length !== CODE_SYMBOLS) throw new CodeMalformed();
  const data = s.slice(0, DATA_SYMBOLS);
  const check = s[DATA_SYMBOLS]!;
  const v = decodeInteger(data);
  if (v < 0n || !CHECK_ALPHABET.includes(check)) throw new CodeMalformed();
  if (checkSymbol(v) !== check) throw new CodeTypo();
  // Passing the check but above 2^128 cannot come from one slip of a real code.
  if (v >= MAX_CODE) throw new CodeMalformed();
  return s;
}

/** The 16 code bytes behind a canonical code (from normaliseCode). */
export function codeBytes(canonical: string): Buffer {
  return bigIntToBytes(decodeInteger(canonical.slice(0, DATA_SYMBOLS)), CODE_BYTES);
}

/** Receipts: 10 random Crockford symbols (50 bits); only their keyed hash is stored. */
export const RECEIPT_SYMBOLS = 10;

export function generateReceipt(random: RandomBytes): string {
  const bytes = random(RECEIPT_SYMBOLS);
  if (bytes.byteLength < RECEIPT_SYMBOLS) throw new Error('random source returned too few bytes');
  // Each byte's low 5 bits pick one symbol: uniform, since 256 is a multiple of 32.
  let s = '';
  for (let i = 0; i < RECEIPT_SYMBOLS; i++) s += ALPHABET[bytes[i]! & 31]!;
  return s;
}

export function normaliseReceipt(input: string): string {
  if (typeof input !== 'string' || input.length > 100) throw new ReceiptMalformed();
  const s = normaliseSymbols(input);
  if (s.length !== RECEIPT_SYMBOLS || decodeInteger(s) < 0n) throw new ReceiptMalformed();
  return s;
}
