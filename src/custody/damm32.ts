/**
 * A check symbol over the 32 Crockford symbols that catches every single substitution and every
 * swap of two neighbouring symbols, the check symbol included.
 *
 * Scheme: H. M. Damm's check-digit system over a totally anti-symmetric quasigroup
 * (Damm, "Totally anti-symmetric quasigroups for all orders n ≠ 2, 6", Discrete Mathematics
 * 307 (2007) 715–729; the citation is from memory, the proof below does not depend on it).
 * The quasigroup is x ∗ y = α·x + y in GF(2⁵), built on the primitive polynomial
 * x⁵ + x² + 1, with α = x (the element 2).
 *
 * Why it works, in three lines:
 *  - quasigroup: for fixed x, y ↦ αx + y is a bijection; for fixed y, x ↦ αx + y is one too (α ≠ 0),
 *    so a changed symbol changes the running value, and every later step maps different values
 *    to different values: every single substitution is caught;
 *  - total anti-symmetry: (c∗x)∗y = α²c + αx + y and (c∗y)∗x = α²c + αy + x are equal only when
 *    (α + 1)(x + y) = 0, that is x = y, since α ≠ 1: every adjacent transposition is caught;
 *  - the check symbol is the one c with r ∗ c = 0 for the running value r, i.e. c = α·r
 *    (characteristic 2), and a whole code is valid when the running value ends at 0.
 * The unit test checks both properties exhaustively over all 32³ triples and all one-slip
 * variants of sample codes.
 */
const FIELD_POLY = 0b100101; // x⁵ + x² + 1, primitive over GF(2)
const ALPHA = 2;

/** Multiplication in GF(2⁵) (shift-and-add; small and table-free). */
export function gfMul(a: number, b: number): number {
  let product = 0;
  let x = a;
  let y = b;
  while (y > 0) {
    if (y & 1) product ^= x;
    y >>= 1;
    x <<= 1;
    if (x & 0b100000) x ^= FIELD_POLY;
  }
  return product;
}

/** The quasigroup operation x ∗ y = α·x + y (addition in GF(2⁵) is XOR). */
export function quasigroup(x: number, y: number): number {
  return gfMul(ALPHA, x) ^ y;
}

/** Running value after the digits (each 0..31), starting from 0. */
export function interim(digits: readonly number[]): number {
  let r = 0;
  for (const d of digits) r = quasigroup(r, d);
  return r;
}

/** The check digit to append to `digits`. */
export function checkDigit(digits: readonly number[]): number {
  return gfMul(ALPHA, interim(digits));
}

/** Does a digit sequence (check digit last) pass? */
export function isValid(digitsWithCheck: readonly number[]): boolean {
  return interim(digitsWithCheck) === 0;
}
