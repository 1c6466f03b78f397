import canonicalize from 'canonicalize';

/**
 * RFC 8785 (JSON Canonicalization Scheme) through the `canonicalize` package: object keys
 * sorted by UTF-16 code units, no whitespace, numbers serialised as ECMAScript does
 * (RFC 8785 §3.2.2.3). A library rather than our own code, so the signed bytes match what
 * any other RFC 8785 implementation produces from the same statement.
 */
export function canonicalJson(value: unknown): string {
  assertJsonValue(value);
  const text = canonicalize(value);
  if (text === undefined) throw new TypeError('canonical JSON needs a JSON value');
  return text;
}

/** Refuses what JSON cannot hold (non-finite numbers, undefined, functions, bigints) instead of dropping it. */
function assertJsonValue(value: unknown): void {
  if (value === null || typeof value === 'boolean' || typeof value === 'string') return;
  if (typeof value === 'number') {
    if (!Number.isFinite(value)) throw new TypeError('canonical JSON cannot hold a non-finite number');
    return;
  }
  if (Array.isArray(value)) return value.forEach(assertJsonValue);
  if (typeof value === 'object') return Object.values(value as object).forEach((v) => v !== undefined && assertJsonValue(v));
  throw new TypeError(`canonical JSON cannot hold a ${typeof value}`);
}

export function canonicalBytes(value: unknown): Uint8Array {
  return new TextEncoder().encode(canonicalJson(value));
}

export function canonicalStatementBytes(s: object): Uint8Array {
  return canonicalBytes(s);
}
