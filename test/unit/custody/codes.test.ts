import crypto from 'node:crypto';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  canonicalFromBytes,
  codeBytes,
  formatCode,
  generateCode,
  generateReceipt,
  normaliseCode,
  normaliseReceipt,
} from '../../../src/custody/codes.ts';
import { ALPHABET, CHECK_ALPHABET } from '../../../src/custody/crockford.ts';
import { CodeMalformed, CodeTypo, ReceiptMalformed } from '../../../src/custody/errors.ts';

// Crockford, "Base 32" (crockford.com/base32.html): alphabet, decoding of O/I/L, mod-37 check symbol.
const zeroCode = canonicalFromBytes(Buffer.alloc(16));
const oneCode = canonicalFromBytes(Buffer.from('00000000000000000000000000000001', 'hex'));

describe('ballot codes', () => {
  it('encodes by hand-checkable examples: 0 → all zeros, check 0; 1 → …1, check 1; 37 → …15, check 0', () => {
    expect(zeroCode).toBe('0'.repeat(27));
    expect(oneCode).toBe('0'.repeat(25) + '11');
    // 37 = 1·32 + 5, and 37 mod 37 = 0
    expect(canonicalFromBytes(Buffer.from('00000000000000000000000000000025', 'hex'))).toBe('0'.repeat(24) + '150');
    // 2^128 − 1 mod 37: 2^36 ≡ 1 (mod 37) by Fermat, so 2^128 = 2^(36·3+20) ≡ 2^20 = 1048576
    // = 37·28339 + 33 ≡ 33; 2^128 − 1 ≡ 32 → the first extra check symbol '*'. Top symbol holds 3 bits: '7'.
    expect(canonicalFromBytes(Buffer.alloc(16, 0xff))).toBe('7' + 'Z'.repeat(25) + '*');
  });

  it('shows 27 symbols in groups of four and reads its own display form back', () => {
    const c = generateCode((n) => crypto.randomBytes(n));
    expect(c.canonical).toMatch(/^[0-9A-HJKMNP-TV-Z]{26}[0-9A-HJKMNP-TV-Z*~$=U]$/);
    expect(c.display).toMatch(/^([0-9A-Z*~$=]{4}-){6}[0-9A-Z*~$=]{3}$/);
    expect(formatCode(c.canonical)).toBe(c.display);
    expect(normaliseCode(c.display)).toBe(c.canonical);
  });

  it.each([
    ['lower case', '0000-0000-0000-0000-0000-0000-011'.toLowerCase(), oneCode],
    ['spaces instead of hyphens', '0000 0000 0000 0000 0000 0000 011', oneCode],
    ['no separators', '000000000000000000000000011', oneCode],
    ['O for zero', 'OOOO-oooo-0000-0000-0000-0000-011', oneCode],
    ['I for one', '0000-0000-0000-0000-0000-0000-0I1', oneCode],
    ['l for one', '0000-0000-0000-0000-0000-0000-0ll', oneCode],
    ['stray spaces, tabs and hyphens', '  0000--0000\t0000 - 0000 0000 0000 011 ', oneCode],
  ])('normalises %s', (_name, input, expected) => {
    expect(normaliseCode(input)).toBe(expected);
  });

  it.each([
    ['too short', '0000-0000-0000-0000-0000-0000-01'],
    ['too long', '0000-0000-0000-0000-0000-0000-0110'],
    ['U in the data', 'U000-0000-0000-0000-0000-0000-011'],
    ['punctuation', '0000.0000-0000-0000-0000-0000-011'],
    ['a check-only symbol in the data', '*000-0000-0000-0000-0000-0000-011'],
    ['2^128, one past the range, with a valid check', '8' + '0'.repeat(25) + '~'], // 2^128 ≡ 33 (above) → '~'
    ['empty', ''],
  ])('rejects %s as malformed', (_name, input) => {
    expect(() => normaliseCode(input)).toThrow(CodeMalformed);
  });

  it('reports a wrong check symbol as a typo', () => {
    expect(() => normaliseCode('0'.repeat(25) + '12')).toThrow(CodeTypo);
    expect(() => normaliseCode('0'.repeat(25) + '1U')).toThrow(CodeTypo);
  });

  it('round-trips the 16 bytes behind a code', () => {
    const bytes = crypto.randomBytes(16);
    expect(codeBytes(canonicalFromBytes(bytes)).equals(bytes)).toBe(true);
  });

  const codeArb = fc.uint8Array({ minLength: 16, maxLength: 16 }).map((b) => canonicalFromBytes(b));

  it('catches every single-symbol substitution (property, fast-check)', () => {
    fc.assert(
      fc.property(codeArb, fc.nat(26), fc.nat(36), (code, pos, pick) => {
        const pool = pos < 26 ? ALPHABET : CHECK_ALPHABET;
        const replacement = pool[pick % pool.length]!;
        fc.pre(replacement !== code[pos]);
        const typed = code.slice(0, pos) + replacement + code.slice(pos + 1);
        expect(() => normaliseCode(typed)).toThrow(CodeTypo);
      }),
      { numRuns: 5000 },
    );
  });

  it('catches every adjacent transposition, including with the check symbol (property, fast-check)', () => {
    fc.assert(
      fc.property(codeArb, fc.nat(25), (code, pos) => {
        fc.pre(code[pos] !== code[pos + 1]);
        const typed = code.slice(0, pos) + code[pos + 1] + code[pos] + code.slice(pos + 2);
        // A check-only symbol (* ~ $ = U) moved into the data is malformed; everything else is a typo.
        const error = /[*~$=U]/.test(typed.slice(0, 26)) ? CodeMalformed : CodeTypo;
        expect(() => normaliseCode(typed)).toThrow(error);
      }),
      { numRuns: 5000 },
    );
  });

  it('checks exhaustively every substitution and adjacent transposition of one random code', () => {
    const code = generateCode((n) => crypto.randomBytes(n)).canonical;
    let tried = 0;
    for (let pos = 0; pos < 27; pos++) {
      for (const r of pos < 26 ? ALPHABET : CHECK_ALPHABET) {
        if (r === code[pos]) continue;
        tried++;
        expect(() => normaliseCode(code.slice(0, pos) + r + code.slice(pos + 1))).toThrow(CodeTypo);
      }
    }
    expect(tried).toBe(26 * 31 + 36);
    // Adjacent transpositions, the check symbol included (Crockford's mod-37 check catches them all).
    for (let pos = 0; pos < 26; pos++) {
      if (code[pos] === code[pos + 1]) continue;
      const swapped = code.slice(0, pos) + code[pos + 1] + code[pos] + code.slice(pos + 2);
      expect(() => normaliseCode(swapped)).toThrow();
    }
  });
});

describe('receipts', () => {
  it('are 10 Crockford symbols and normalise like codes', () => {
    const r = generateReceipt((n) => crypto.randomBytes(n));
    expect(r).toMatch(/^[0-9A-HJKMNP-TV-Z]{10}$/);
    expect(normaliseReceipt(` ${r.slice(0, 5).toLowerCase()}-${r.slice(5)} `)).toBe(r);
    expect(normaliseReceipt('OIL0011100')).toBe('0110011100');
    expect(() => normaliseReceipt('012345678')).toThrow(ReceiptMalformed);
    expect(() => normaliseReceipt('012345678U')).toThrow(ReceiptMalformed);
  });
});
