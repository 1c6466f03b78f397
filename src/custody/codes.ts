import type { RandomSource as RandomBytes } from '../mechanism/random.ts';
import { CodeMalformed, CodeTypo, ReceiptMalformed } from './errors.ts';
import { ALPHABET, bigIntToBytes, bytesToBigInt, decodeInteger, encodeInteger, normaliseSymbols, symbolValue } from './crockford.ts';
import { checkDigit, isValid } from './damm32.ts';

/**
 * Ballot codes: 80 random bits written as 16 Crockford base32 symbols plus one check symbol
 * from the same alphabet (damm32.ts), 17 letters and digits in all, shown as four groups
 * (4-4-4-5, 20 characters with the hyphens). Only their keyed hash is stored, and the shared
 * guess limits keep guessing hopeless (DEVELOPERS.md, "Ballot codes"). It is the only format.
 */
export const CODE_BYTES = 10;
const DATA_SYMBOLS = 16; // 80 / 5
export const CODE_SYMBOLS = DATA_SYMBOLS + 1;
const GROUPS = [4, 4, 4, 5] as const;

export interface BallotCode {
  /** What the member sees: 17 symbols in groups of 4-4-4-5, joined by hyphens. */
  display: string;
  /** 17 upper-case symbols, no separators; input to the keyed hash. */
  canonical: string;
}

const digitsOf = (symbols: string): number[] => Array.from(symbols, (ch) => symbolValue(ch));

export function canonicalFromBytes(bytes: Uint8Array): string {
  if (bytes.byteLength !== CODE_BYTES) throw new RangeError('a code has 10 bytes');
  const data = encodeInteger(bytesToBigInt(bytes), DATA_SYMBOLS);
  return data + ALPHABET[checkDigit(digitsOf(data))]!;
}

export function formatCode(canonical: string): string {
  if (canonical.length !== CODE_SYMBOLS) throw new RangeError('a code has 17 symbols');
  const parts: string[] = [];
  let at = 0;
  for (const size of GROUPS) {
    parts.push(canonical.slice(at, at + size));
    at += size;
  }
  return parts.join('-');
}

export function generateCode(random: RandomBytes): BallotCode {
  const bytes = random(CODE_BYTES);
  if (bytes.byteLength !== CODE_BYTES) throw new Error('random source returned the wrong number of bytes');
  const canonical = canonicalFromBytes(bytes);
  return { display: formatCode(canonical), canonical };
}

/**
 * Canonical form of a typed code. Wrong length or characters: CodeMalformed.
 * Right shape but the check symbol disagrees: CodeTypo, decided here before any database lookup.
 */
export function normaliseCode(input: string): string {
  if (typeof input !== 'string' || input.length > 200) throw new CodeMalformed();
  const s = normaliseSymbols(input);
  if (s.length !== CODE_SYMBOLS) throw new CodeMalformed();
  const digits = digitsOf(s);
  if (digits.some((d) => d < 0)) throw new CodeMalformed();
  if (!isValid(digits)) throw new CodeTypo();
  return s;
}

/** The 10 random bytes behind a canonical code (from normaliseCode). */
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
