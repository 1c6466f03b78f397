import { ALPHABET, decodeInteger, encodeInteger, normaliseSymbols } from '../custody/crockford.ts';
import type { Db } from '../db/knex.ts';

/**
 * A short reference to an election for printed slips: the first 40 bits of its random id
 * (UUID v4) written as 8 Crockford base32 symbols, lower case, e.g. "7k3m9q2x". It is derived,
 * so nothing new is stored; the id stays the real key. Two elections share a reference with
 * probability about n²/2⁴¹ for n elections, negligible for an instance's lifetime; if it ever
 * happens, the reference is ambiguous and answers "not found" rather than guess.
 */
const SHORT_SYMBOLS = 8;

export function shortRefOf(electionId: string): string {
  const hex = electionId.replace(/-/g, '').slice(0, 10);
  return encodeInteger(BigInt(`0x${hex}`), SHORT_SYMBOLS).toLowerCase();
}

/** The 10 hex digits a reference stands for, or null when it is not 8 Crockford symbols. */
function hexPrefix(ref: string): string | null {
  if (typeof ref !== 'string' || ref.length > 40) return null;
  const symbols = normaliseSymbols(ref);
  if (symbols.length !== SHORT_SYMBOLS || [...symbols].some((c) => !ALPHABET.includes(c))) return null;
  return decodeInteger(symbols).toString(16).padStart(10, '0');
}

/** The id of the election with this short reference, or null (unknown, malformed or ambiguous). */
export async function findElectionIdByShortRef(db: Db, ref: string): Promise<string | null> {
  const prefix = hexPrefix(ref);
  if (!prefix) return null;
  const head = `${prefix.slice(0, 8)}-${prefix.slice(8, 10)}`;
  // A range on the primary key, so the index answers it on both engines.
  const rows = await db('elections')
    .where('id', '>=', `${head}00-0000-0000-000000000000`)
    .andWhere('id', '<=', `${head}ff-ffff-ffff-ffffffffffff`)
    .limit(2)
    .select('id');
  return rows.length === 1 ? (rows[0]!.id as string) : null;
}
