import type { Db } from '../db/knex.ts';
import { toCount } from '../db/knex.ts';
import { CodeAlreadySpent, CodeRevoked, CodeUnknown } from './errors.ts';

/**
 * ballot_codes holds only HMAC-SHA-256 hashes of codes (src/custody/keyedHash.ts).
 * No timestamps and no order: spending a code leaves nothing that says when.
 */
const INSERT_BATCH = 1000; // 2 parameters a row, far under PostgreSQL's 65535 limit

export async function insertCodeHashes(db: Db, electionId: string, hashes: readonly Buffer[]): Promise<void> {
  for (let i = 0; i < hashes.length; i += INSERT_BATCH) {
    const rows = hashes.slice(i, i + INSERT_BATCH).map((code_hash) => ({ election_id: electionId, code_hash }));
    await db('ballot_codes').insert(rows);
  }
}

/**
 * Spends a live code. The conditional UPDATE takes the row lock, so of many concurrent
 * casts with one code exactly one sees a row come back (OWASP ASVS 5.0 2.3.3, 2.3.4).
 */
export async function spendCode(db: Db, electionId: string, codeHash: Buffer): Promise<boolean> {
  const rows = await db('ballot_codes')
    .where({ election_id: electionId, code_hash: codeHash, spent: false, revoked: false })
    .update({ spent: true })
    .returning('election_id');
  return rows.length === 1;
}

export async function findCode(db: Db, electionId: string, codeHash: Buffer): Promise<{ spent: boolean; revoked: boolean } | null> {
  const row = await db('ballot_codes').where({ election_id: electionId, code_hash: codeHash }).first('spent', 'revoked');
  return row ? { spent: row.spent as boolean, revoked: row.revoked as boolean } : null;
}

/**
 * Before a cast: only whether the code was ever issued here. Spent, live and withdrawn codes
 * answer alike (one query, same columns), so whoever holds the codes cannot probe who voted.
 */
export async function assertCodeKnown(db: Db, electionId: string, codeHash: Buffer): Promise<void> {
  const code = await findCode(db, electionId, codeHash);
  if (!code) throw new CodeUnknown();
}

/**
 * At the final cast, the typed reason a code could not be spent. Withdrawal is checked first,
 * so a withdrawn code answers the same whether or not it had been used before withdrawal.
 */
export async function assertCodeUsable(db: Db, electionId: string, codeHash: Buffer): Promise<void> {
  const code = await findCode(db, electionId, codeHash);
  if (!code) throw new CodeUnknown();
  if (code.revoked) throw new CodeRevoked();
  if (code.spent) throw new CodeAlreadySpent();
}

/** Marks a code withdrawn, used or not; true if this call changed it. */
export async function revokeCodeHash(db: Db, electionId: string, codeHash: Buffer): Promise<boolean> {
  const rows = await db('ballot_codes')
    .where({ election_id: electionId, code_hash: codeHash, revoked: false })
    .update({ revoked: true })
    .returning('election_id');
  return rows.length === 1;
}

export async function countCodes(db: Db, electionId: string): Promise<{ issued: number; revoked: number }> {
  const row = await db('ballot_codes')
    .where({ election_id: electionId })
    .first(db.raw('count(*) as issued'), db.raw('count(*) filter (where revoked) as revoked'));
  return { issued: toCount(row?.issued ?? 0), revoked: toCount(row?.revoked ?? 0) };
}
