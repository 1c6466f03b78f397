import type { RandomSource as RandomBytes } from '../mechanism/random.ts';

/** A UUID's text (RFC 9562 §4) in either case, unanchored: for finding one inside longer text. */
export const UUID_PATTERN = '[0-9a-fA-F]{8}-[0-9a-fA-F]{4}-[0-9a-fA-F]{4}-[0-9a-fA-F]{4}-[0-9a-fA-F]{12}';
const UUID = new RegExp(`^${UUID_PATTERN}$`);

/**
 * Whether `id` has a UUID's shape (RFC 9562 §4), in either case: what uuidBytes accepts. The one
 * test of an id's shape; upper-case ids pass, and PostgreSQL's uuid type compares them as equal.
 */
export function isUuid(id: string): boolean {
  return UUID.test(id);
}

/** The 16 bytes of a UUID (RFC 9562 §4), used to bind ciphertexts to their election. */
export function uuidBytes(id: string): Buffer {
  if (!UUID.test(id)) throw new TypeError('not a UUID');
  return Buffer.from(id.replace(/-/g, ''), 'hex');
}

/** A random (version 4) UUID from the given source, RFC 9562 §5.4. */
export function randomUuid(random: RandomBytes): string {
  const b = Buffer.from(random(16));
  if (b.length !== 16) throw new Error('random source returned the wrong number of bytes');
  b[6] = (b[6]! & 0x0f) | 0x40;
  b[8] = (b[8]! & 0x3f) | 0x80;
  const h = b.toString('hex');
  return `${h.slice(0, 8)}-${h.slice(8, 12)}-${h.slice(12, 16)}-${h.slice(16, 20)}-${h.slice(20)}`;
}
