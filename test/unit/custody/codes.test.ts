import crypto from 'node:crypto';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  CODE_BYTES,
  canonicalFromBytes,
  codeBytes,
  formatCode,
  generateCode,
  generateReceipt,
  normaliseCode,
  normaliseReceipt,
} from '../../../src/custody/codes.ts';
import { ALPHABET } from '../../../src/custody/crockford.ts';
import { checkDigit, gfMul, isValid, quasigroup } from '../../../src/custody/damm32.ts';
import { CodeMalformed, CodeTypo, ReceiptMalformed } from '../../../src/custody/errors.ts';

// Crockford, "Base 32" (crockford.com/base32.html): alphabet and decoding of O/I/L.
const random = (n: number) => crypto.randomBytes(n);

/** Every code one slip away: each single substitution by another alphabet symbol, each adjacent swap. */
function oneSlipAway(code: string, alphabet: string): { substitutions: string[]; transpositions: string[] } {
  const substitutions: string[] = [];
  for (let pos = 0; pos < code.length; pos++) {
    for (const r of alphabet) if (r !== code[pos]) substitutions.push(code.slice(0, pos) + r + code.slice(pos + 1));
  }
  const transpositions: string[] = [];
  for (let pos = 0; pos + 1 < code.length; pos++) {
    if (code[pos] !== code[pos + 1]) transpositions.push(code.slice(0, pos) + code[pos + 1] + code[pos] + code.slice(pos + 2));
  }
  return { substitutions, transpositions };
}

describe('the check over 32 symbols (damm32)', () => {
  it('is a quasigroup: every row and every column of the 32×32 table is a permutation', () => {
    for (let x = 0; x < 32; x++) {
      expect(new Set(Array.from({ length: 32 }, (_, y) => quasigroup(x, y))).size).toBe(32);
      expect(new Set(Array.from({ length: 32 }, (_, y) => quasigroup(y, x))).size).toBe(32);
    }
  });

  it('is totally anti-symmetric, checked over all 32³ triples: (c∗x)∗y = (c∗y)∗x only when x = y', () => {
    let clashes = 0;
    for (let c = 0; c < 32; c++)
      for (let x = 0; x < 32; x++)
        for (let y = 0; y < 32; y++) if (x !== y && quasigroup(quasigroup(c, x), y) === quasigroup(quasigroup(c, y), x)) clashes++;
    expect(clashes).toBe(0);
  });

  it('multiplies in GF(2⁵) by hand-checkable examples (x⁵ = x² + 1)', () => {
    expect(gfMul(2, 16)).toBe(0b00101); // x·x⁴ = x⁵ = x² + 1
    expect(gfMul(1, 29)).toBe(29);
    expect(gfMul(3, 3)).toBe(5); // (x+1)² = x² + 1
    // α = x is primitive: its powers run through all 31 non-zero elements.
    const powers = new Set<number>();
    let p = 1;
    for (let i = 0; i < 31; i++) {
      powers.add(p);
      p = gfMul(2, p);
    }
    expect(powers.size).toBe(31);
    expect(p).toBe(1);
  });

  it('appends a check that makes the running value 0, and a different symbol makes it non-zero', () => {
    // Hand-worked: digits [1] → r = 2·0 + 1 = 1, check = 2·1 = 2; then r = 2·1 + 2 = 0.
    expect(checkDigit([1])).toBe(2);
    expect(isValid([1, 2])).toBe(true);
    expect(isValid([1, 3])).toBe(false);
  });
});

describe('ballot codes', () => {
  it('encodes by hand-checkable examples: ten zero bytes → sixteen zeros and check 0', () => {
    expect(canonicalFromBytes(Buffer.alloc(10))).toBe('0'.repeat(17));
    // 1 → fifteen 0s then 1; running value 1, check 2·1 = 2.
    expect(canonicalFromBytes(Buffer.from('00000000000000000001', 'hex'))).toBe('0'.repeat(15) + '12');
  });

  it('is 17 letters and digits with at least 80 bits of randomness, shown as 4-4-4-5 (20 characters)', () => {
    const c = generateCode(random);
    expect(CODE_BYTES * 8).toBeGreaterThanOrEqual(80);
    expect(c.canonical).toMatch(/^[0-9A-HJKMNP-TV-Z]{17}$/);
    expect(c.display).toMatch(/^[0-9A-HJKMNP-TV-Z]{4}-[0-9A-HJKMNP-TV-Z]{4}-[0-9A-HJKMNP-TV-Z]{4}-[0-9A-HJKMNP-TV-Z]{5}$/);
    expect(c.display.length).toBeLessThanOrEqual(20);
    expect(formatCode(c.canonical)).toBe(c.display);
    expect(normaliseCode(c.display)).toBe(c.canonical);
    expect(codeBytes(c.canonical).length).toBe(10);
  });

  it('round-trips the 10 bytes behind a code', () => {
    const bytes = crypto.randomBytes(10);
    expect(codeBytes(canonicalFromBytes(bytes)).equals(bytes)).toBe(true);
  });

  const one = canonicalFromBytes(Buffer.from('00000000000000000001', 'hex')); // 000000000000000 12
  it.each([
    ['lower case', '0000-0000-0000-00012', one],
    ['spaces instead of hyphens', '0000 0000 0000 00012', one],
    ['O and o for zero', 'OOOO-oooo-0000-00012', one],
    ['I for one', '0000-0000-0000-000I2', one],
    ['l for one', '0000-0000-0000-000l2', one],
    ['stray spaces, tabs and hyphens', '  0000--0000\t0000 - 00012 ', one],
  ])('normalises %s', (_name, input, expected) => {
    expect(normaliseCode(input)).toBe(expected);
  });

  it.each([
    ['16 symbols', '0000-0000-0000-0001'],
    ['18 symbols', '0000-0000-0000-000120'],
    ['U', '0000-0000-0000-000U2'],
    ['punctuation', '0000.0000-0000-00012'],
    ['a check symbol of the old format', '0000-0000-0000-0001*'],
    ['empty', ''],
  ])('rejects %s as malformed', (_name, input) => {
    expect(() => normaliseCode(input)).toThrow(CodeMalformed);
  });

  it('catches EXHAUSTIVELY every single substitution and every adjacent transposition of 200 random codes and of edge codes', () => {
    const samples = [
      canonicalFromBytes(Buffer.alloc(10)),
      canonicalFromBytes(Buffer.alloc(10, 0xff)),
      one,
      ...Array.from({ length: 200 }, () => generateCode(random).canonical),
    ];
    let substitutions = 0;
    let transpositions = 0;
    for (const code of samples) {
      const slips = oneSlipAway(code, ALPHABET);
      expect(slips.substitutions.length).toBe(17 * 31);
      for (const typed of slips.substitutions) expect(() => normaliseCode(typed)).toThrow(CodeTypo);
      for (const typed of slips.transpositions) expect(() => normaliseCode(typed)).toThrow(CodeTypo);
      substitutions += slips.substitutions.length;
      transpositions += slips.transpositions.length;
    }
    expect(substitutions).toBe(203 * 17 * 31);
    expect(transpositions).toBeGreaterThan(203 * 10);
  });

  it('catches every single substitution and adjacent transposition of any code (property, fast-check)', () => {
    const codeArb = fc.uint8Array({ minLength: 10, maxLength: 10 }).map((b) => canonicalFromBytes(b));
    fc.assert(
      fc.property(codeArb, fc.nat(16), fc.nat(31), (code, pos, pick) => {
        const r = ALPHABET[pick]!;
        if (r !== code[pos]) expect(() => normaliseCode(code.slice(0, pos) + r + code.slice(pos + 1))).toThrow(CodeTypo);
        const p = Math.min(pos, 15);
        if (code[p] !== code[p + 1]) {
          expect(() => normaliseCode(code.slice(0, p) + code[p + 1] + code[p] + code.slice(p + 2))).toThrow(CodeTypo);
        }
      }),
      { numRuns: 3000 },
    );
  });
});

describe('the 27-symbol format of earlier versions is gone', () => {
  // No deployment ever issued them: a well-formed one (1 in 26 Crockford symbols with its mod-37 check, Crockford,
  // "Base 32") is not a ballot code, and is refused as one before any lookup.
  it.each([
    ['1 with its check symbol', '0000-0000-0000-0000-0000-0000-011'],
    ['zero', '0'.repeat(27)],
    ['2^128 − 1 with its check symbol', '7' + 'Z'.repeat(25) + '*'],
  ])('refuses %s as malformed', (_name, input) => {
    expect(() => normaliseCode(input)).toThrow(CodeMalformed);
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
