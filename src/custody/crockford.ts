/**
 * Crockford's Base32 (Douglas Crockford, "Base 32", crockford.com/base32.html):
 * 32 symbols without I, L, O and U; on input O reads as 0 and I, L as 1; case and
 * hyphens are ignored. Ballot codes carry their own check symbol from this alphabet (damm32.ts),
 * not Crockford's optional mod-37 one.
 */
export const ALPHABET = '0123456789ABCDEFGHJKMNPQRSTVWXYZ';

const VALUE = new Map<string, number>();
for (let i = 0; i < ALPHABET.length; i++) VALUE.set(ALPHABET[i]!, i);
VALUE.set('O', 0);
VALUE.set('I', 1);
VALUE.set('L', 1);

/**
 * Upper-cases, drops spaces (any whitespace) and hyphens, maps look-alikes to their
 * symbol (O→0, I/L→1). Keeps other characters, so the caller can reject them.
 */
export function normaliseSymbols(input: string): string {
  let out = '';
  for (const ch of input.toUpperCase()) {
    if (ch === '-' || /\s/.test(ch)) continue;
    if (ch === 'O') out += '0';
    else if (ch === 'I' || ch === 'L') out += '1';
    else out += ch;
  }
  return out;
}

/** Symbol value, or -1 for a character outside the 32-symbol alphabet. */
export function symbolValue(ch: string): number {
  return VALUE.get(ch) ?? -1;
}

/** Big-endian base32 digits of `bytes` read as one unsigned integer, left-padded to `digits`. */
export function encodeInteger(value: bigint, digits: number): string {
  let s = '';
  let v = value;
  for (let i = 0; i < digits; i++) {
    s = ALPHABET[Number(v & 31n)]! + s;
    v >>= 5n;
  }
  if (v !== 0n) throw new RangeError('value does not fit');
  return s;
}

/** The integer a string of symbols stands for; -1n if a character is not a symbol. */
export function decodeInteger(symbols: string): bigint {
  let v = 0n;
  for (const ch of symbols) {
    const d = symbolValue(ch);
    if (d < 0) return -1n;
    v = (v << 5n) | BigInt(d);
  }
  return v;
}

export function bytesToBigInt(bytes: Uint8Array): bigint {
  let v = 0n;
  for (const b of bytes) v = (v << 8n) | BigInt(b);
  return v;
}

export function bigIntToBytes(value: bigint, length: number): Buffer {
  const out = Buffer.alloc(length);
  let v = value;
  for (let i = length - 1; i >= 0; i--) {
    out[i] = Number(v & 0xffn);
    v >>= 8n;
  }
  if (v !== 0n) throw new RangeError('value does not fit');
  return out;
}
