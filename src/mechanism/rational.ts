/**
 * Exact non-negative rationals in BigInt. Outcomes of the draw are decided only
 * with these (Canonne, Kamath & Steinke 2020 §5: exact sampling needs exact arithmetic).
 */
export interface Rational {
  readonly num: bigint;
  readonly den: bigint;
}

export function gcd(a: bigint, b: bigint): bigint {
  let x = a < 0n ? -a : a;
  let y = b < 0n ? -b : b;
  while (y !== 0n) [x, y] = [y, x % y];
  return x;
}

/** Lowest terms with a positive denominator. */
export function rational(num: bigint, den: bigint): Rational {
  if (den === 0n) throw new RangeError('rational with zero denominator');
  const sign = den < 0n ? -1n : 1n;
  const g = gcd(num, den) || 1n;
  return { num: (sign * num) / g, den: (sign * den) / g };
}

export function divideByInteger(r: Rational, k: bigint): Rational {
  return rational(r.num, r.den * k);
}

export function multiplyByInteger(r: Rational, k: bigint): Rational {
  return rational(r.num * k, r.den);
}

/**
 * Exact decimal text when the rational terminates in base 10 (denominator of
 * the form 2^i·5^j), otherwise "num/den". Used for ε/k in statements.
 */
export function rationalToText(r: Rational): string {
  let rest = r.den;
  let twos = 0;
  let fives = 0;
  while (rest % 2n === 0n) [rest, twos] = [rest / 2n, twos + 1];
  while (rest % 5n === 0n) [rest, fives] = [rest / 5n, fives + 1];
  if (rest !== 1n) return `${r.num}/${r.den}`;
  const places = Math.max(twos, fives);
  const scaled = (r.num * 10n ** BigInt(places)) / r.den;
  if (places === 0) return scaled.toString();
  const digits = scaled.toString().padStart(places + 1, '0');
  const whole = digits.slice(0, -places);
  const fraction = digits.slice(-places).replace(/0+$/, '');
  return fraction ? `${whole}.${fraction}` : whole;
}

/** For display and bounds only; never used to decide an outcome. */
export function rationalToNumber(r: Rational): number {
  return Number(r.num) / Number(r.den);
}
