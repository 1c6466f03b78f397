import type { PrivacyStatement } from './statement.ts';

/**
 * Deterministic JSON for signing: object keys sorted by UTF-16 code units, no
 * whitespace, numbers in JavaScript's shortest round-trip form. This follows the
 * ideas of RFC 8785 (JSON Canonicalization Scheme) for the value types a
 * statement uses: strings, finite numbers, booleans, null, arrays and objects.
 */
export function canonicalJson(value: unknown): string {
  if (value === null || typeof value === 'boolean' || typeof value === 'string') return JSON.stringify(value);
  if (typeof value === 'number') {
    if (!Number.isFinite(value)) throw new TypeError('canonical JSON cannot hold a non-finite number');
    return JSON.stringify(value);
  }
  if (Array.isArray(value)) return `[${value.map(canonicalJson).join(',')}]`;
  if (typeof value === 'object') {
    const entries = Object.entries(value as Record<string, unknown>)
      .filter(([, v]) => v !== undefined)
      .sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0));
    return `{${entries.map(([k, v]) => `${JSON.stringify(k)}:${canonicalJson(v)}`).join(',')}}`;
  }
  throw new TypeError(`canonical JSON cannot hold a ${typeof value}`);
}

export function canonicalStatementBytes(s: PrivacyStatement): Uint8Array {
  return new TextEncoder().encode(canonicalJson(s));
}
