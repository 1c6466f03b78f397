import { InvalidEpsilon, quoteForMessage } from './errors.ts';
import { rational } from './rational.ts';

/** ε as the organiser typed it and as an exact fraction in lowest terms. */
export interface Epsilon {
  text: string;
  num: bigint;
  den: bigint;
}

export const EPSILON_MIN_TEXT = '0.01';
export const EPSILON_MAX_TEXT = '10';
export const EPSILON_MAX_DECIMALS = 4;

export const EPSILON_RULE =
  `epsilon must be a decimal number from ${EPSILON_MIN_TEXT} to ${EPSILON_MAX_TEXT} ` +
  `with at most ${EPSILON_MAX_DECIMALS} decimal places, such as "0.5", "1" or "1.25"`;

// Plain decimals only: no sign, exponent, spaces, leading "." or trailing ".",
// so the text shown in the statement is exactly the value used.
const DECIMAL = /^(0|[1-9][0-9]{0,2})(?:\.([0-9]{1,4}))?$/;

/**
 * Parses ε into an exact rational. Floats never touch it: "0.1" is 1/10 exactly,
 * which a binary float cannot hold (Mironov 2012 shows how such gaps leak).
 */
export function parseEpsilon(text: string): Epsilon {
  if (typeof text !== 'string') throw new InvalidEpsilon(`${EPSILON_RULE} (got ${quoteForMessage(text)})`);
  const match = DECIMAL.exec(text);
  if (!match) throw new InvalidEpsilon(`${EPSILON_RULE} (got ${quoteForMessage(text)})`);
  const fraction = match[2] ?? '';
  const scale = 10n ** BigInt(fraction.length);
  const scaled = BigInt(match[1] ?? '0') * scale + BigInt(fraction || '0');
  // Compare scaled/scale with 1/100 and 10 by cross-multiplying: exact.
  if (scaled * 100n < scale || scaled > 10n * scale) {
    throw new InvalidEpsilon(`${EPSILON_RULE} (got ${quoteForMessage(text)})`);
  }
  const r = rational(scaled, scale);
  return { text, num: r.num, den: r.den };
}

/** Accepts either form at an API edge and proves an Epsilon object is self-consistent. */
export function toEpsilon(value: string | Epsilon): Epsilon {
  if (typeof value === 'string') return parseEpsilon(value);
  if (value === null || typeof value !== 'object' || typeof value.text !== 'string') {
    throw new InvalidEpsilon(`${EPSILON_RULE} (got ${quoteForMessage(value)})`);
  }
  const parsed = parseEpsilon(value.text);
  if (parsed.num !== value.num || parsed.den !== value.den) {
    throw new InvalidEpsilon(`epsilon ${quoteForMessage(value.text)} does not match its fraction`);
  }
  return parsed;
}
