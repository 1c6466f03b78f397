import { describe, expect, it } from 'vitest';
import { canonicalJson } from '../../../src/mechanism/index.ts';

/**
 * RFC 8785 (JSON Canonicalization Scheme), Appendix B: IEEE 754 bit patterns and the text a
 * canonicaliser must write for them. The table was written from memory and checked against
 * several independent public test suites that quote the RFC's table (all agree row for row);
 * the RFC text itself was not at hand. The two non-finite rows must be refused (RFC 8785 §3.2.2.3).
 */
const APPENDIX_B: [string, string][] = [
  ['0000000000000000', '0'],
  ['8000000000000000', '0'],
  ['0000000000000001', '5e-324'],
  ['8000000000000001', '-5e-324'],
  ['7fefffffffffffff', '1.7976931348623157e+308'],
  ['ffefffffffffffff', '-1.7976931348623157e+308'],
  ['4340000000000000', '9007199254740992'],
  ['c340000000000000', '-9007199254740992'],
  ['4430000000000000', '295147905179352830000'],
  ['44b52d02c7e14af5', '9.999999999999997e+22'],
  ['44b52d02c7e14af6', '1e+23'],
  ['44b52d02c7e14af7', '1.0000000000000001e+23'],
  ['444b1ae4d6e2ef4e', '999999999999999700000'],
  ['444b1ae4d6e2ef4f', '999999999999999900000'],
  ['444b1ae4d6e2ef50', '1e+21'],
  ['3eb0c6f7a0b5ed8c', '9.999999999999997e-7'],
  ['3eb0c6f7a0b5ed8d', '0.000001'],
  ['41b3de4355555553', '333333333.3333332'],
  ['41b3de4355555554', '333333333.33333325'],
  ['41b3de4355555555', '333333333.3333333'],
  ['41b3de4355555556', '333333333.3333334'],
  ['41b3de4355555557', '333333333.33333343'],
  ['becbf647612f3696', '-0.0000033333333333333333'],
  ['43143ff3c1cb0959', '1424953923781206.2'],
];

const fromBits = (hex: string): number => Buffer.from(hex, 'hex').readDoubleBE(0);

describe('canonicalJson (RFC 8785 through the canonicalize package)', () => {
  it.each(APPENDIX_B)('writes the double %s as %s (RFC 8785 Appendix B)', (bits, text) => {
    expect(canonicalJson(fromBits(bits))).toBe(text);
    expect(canonicalJson({ n: fromBits(bits) })).toBe(`{"n":${text}}`);
  });

  it.each(['7fffffffffffffff', '7ff0000000000000'])('refuses the non-finite double %s (NaN, Infinity)', (bits) => {
    expect(() => canonicalJson(fromBits(bits))).toThrow(TypeError);
  });

  it('sorts keys by UTF-16 code units, not by code points (RFC 8785 §3.2.3)', () => {
    // U+1F600 is the surrogate pair D83D DE00, which sorts before U+FB33 (as in the RFC's own sorting example).
    expect(canonicalJson({ '\ufb33': 1, '\u{1f600}': 2, '\u0080': 3, '1': 4 })).toBe('{"1":4,"\u0080":3,"\u{1f600}":2,"\ufb33":1}');
  });

  it('escapes only what JSON requires, with the short escapes and lower-case \\u00xx (RFC 8785 §3.2.2.2)', () => {
    expect(canonicalJson('\u0008\t\n\f\r"\\\u001f\u007f€/')).toBe('"\\b\\t\\n\\f\\r\\"\\\\\\u001f\u007f€/"');
  });
});
