import type { Knex } from 'knex';
import { innerBallot } from '../custody/index.ts';
import type { Db } from '../db/knex.ts';
import { rawRows, toBuffer, toCount, uniqueViolation } from '../db/knex.ts';

/**
 * ballots: random id, election, sealed bytes. Nothing else, so no column ties a ballot to
 * a code, to its receipt (held by the member) or to when it arrived (DESIGN §5).
 */

export interface StoredBallot {
  id: string;
  electionId: string;
  sealed: Buffer;
}

export async function insertBallot(db: Db, b: StoredBallot): Promise<void> {
  await db('ballots').insert({ id: b.id, election_id: b.electionId, sealed: b.sealed });
}

/** Records a receipt hash; false if that hash is already taken in this election (retry with another). */
export async function insertReceipt(db: Db, electionId: string, receiptHash: Buffer): Promise<boolean> {
  const rows = await db('receipts')
    .insert({ election_id: electionId, receipt_hash: receiptHash })
    .onConflict(['election_id', 'receipt_hash'])
    .ignore()
    .returning('election_id');
  return rows.length === 1;
}

export async function receiptExists(db: Db, electionId: string, receiptHash: Buffer): Promise<boolean> {
  const row = await db('receipts').where({ election_id: electionId, receipt_hash: receiptHash }).first('election_id');
  return row !== undefined;
}

/** Receipts survive shredding, so this is the number of ballots ever cast. */
export async function countReceipts(db: Db, electionId: string): Promise<number> {
  const row = await db('receipts').where({ election_id: electionId }).count({ n: '*' }).first();
  return toCount(row?.n ?? 0);
}

export async function countStoredBallots(db: Db, electionId: string): Promise<number> {
  const row = await db('ballots').where({ election_id: electionId }).count({ n: '*' }).first();
  return toCount(row?.n ?? 0);
}

/**
 * Sealed ballots in batches by keyset pagination on the random id (no OFFSET, so each
 * page is an index range scan and memory stays O(batch)). Each comes out of the shred layer here
 * (innerBallot, with the election's shred key, or null for an election made before the layer),
 * the one place ballots are read: a ballot that does not open under it comes out empty, and counts as unreadable.
 */
export async function* sealedBatches(db: Db, electionId: string, batchSize: number, shredKey: Uint8Array | null): AsyncGenerator<Buffer[]> {
  let after: string | null = null;
  for (;;) {
    const q = db('ballots').where({ election_id: electionId }).orderBy('id').limit(batchSize).select('id', 'sealed');
    if (after !== null) q.andWhere('id', '>', after);
    const rows: Array<{ id: string; sealed: unknown }> = await q;
    if (rows.length === 0) return;
    after = rows[rows.length - 1]!.id;
    yield rows.map((r) => innerBallot(shredKey, electionId, toBuffer(r.sealed)));
    if (rows.length < batchSize) return;
  }
}

export async function deleteBallots(db: Db, electionId: string): Promise<number> {
  return db('ballots').where({ election_id: electionId }).delete();
}

export interface OneStatementCast {
  electionId: string;
  /** The election's public key and option count the ballot was sealed for; the statement checks both. */
  publicKey: Buffer;
  optionCount: number;
  now: Date;
  codeHash: Buffer;
  receiptHash: Buffer;
  ballotId: string;
  sealed: Buffer;
  castToken: { hash: Buffer; sealedReceipt: Buffer } | null;
}

export type OneStatementOutcome = 'stored' | 'not-stored' | 'receipt-taken';

/**
 * The text castInOneStatement sends, with knex's `?` placeholders, and its bindings in order. Exported so that
 * the intake benchmark's pgbench ceiling (test/bench/support/pgbench.ts) runs this very text.
 */
export function oneStatementCast(c: OneStatementCast): { sql: string; bindings: Knex.RawBinding[] } {
  const tokenCte = c.castToken
    ? `, token as (
        insert into cast_tokens (election_id, token_hash, sealed_receipt)
        select election_id, ?, ? from receipt returning election_id)`
    : '';
  const sql = `
    with e as (
      select id from elections
      where id = ? and state = 'open' and opens_at <= ? and closes_at > ? and public_key = ?
        and (select count(*) from options o where o.election_id = elections.id) = ?
      for share
    ), spent as (
      update ballot_codes set spent = true
      where election_id = (select id from e) and code_hash = ? and spent = false and revoked = false
      returning election_id
    ), receipt as (
      insert into receipts (election_id, receipt_hash) select election_id, ? from spent returning election_id
    ), ballot as (
      insert into ballots (id, election_id, sealed) select ?, election_id, ? from receipt returning election_id
    )${tokenCte}
    select count(*) as stored from ballot`;
  const bindings: Knex.RawBinding[] = [
    c.electionId,
    c.now,
    c.now,
    c.publicKey,
    c.optionCount,
    c.codeHash,
    c.receiptHash,
    c.ballotId,
    c.sealed,
    ...(c.castToken ? [c.castToken.hash, c.castToken.sealedReceipt] : []),
  ];
  return { sql, bindings };
}

/**
 * The whole cast as one statement (data-modifying CTEs, PostgreSQL manual §7.8.4), so a cast is
 * one round trip instead of BEGIN, a check, an update, three inserts and COMMIT. Run outside any
 * transaction, the statement is its own transaction: all of it happens or none of it.
 *  - `e` finds the election only while it accepts ballots at `now` (acceptsBallotsAt's rule) and
 *    only under the key and option count the ballot was sealed for. FOR SHARE, as in
 *    votingElection: a tally's FOR UPDATE waits for this cast, and a cast arriving during a tally
 *    waits for it and then re-reads the row (READ COMMITTED), so it sees the election closed.
 *  - `spent` spends the code with the same conditional UPDATE as spendCode, whose row lock lets
 *    exactly one of many concurrent casts with one code through.
 *  - the receipt, the ballot and the cast token rows are inserted only from the spent row.
 * The receipt insert has no ON CONFLICT: a receipt hash already taken (50-bit receipts can collide
 * in a very large election) fails the whole statement, so nothing is spent, and the caller draws
 * another receipt. 'not-stored': the election is not open, the code is not spendable or the key
 * differs; nothing was written and the caller finds out why on the slower path.
 */
export async function castInOneStatement(db: Knex, c: OneStatementCast): Promise<OneStatementOutcome> {
  const { sql, bindings } = oneStatementCast(c);
  try {
    const rows = rawRows(await db.raw(sql, bindings));
    return toCount(rows[0]?.stored ?? 0) === 1 ? 'stored' : 'not-stored';
  } catch (err) {
    const constraint = uniqueViolation(err);
    if (constraint === RECEIPTS_KEY) return 'receipt-taken';
    // Any other key (a cast token sent with two codes at once): nothing was written; the slower path answers.
    if (constraint !== null) return 'not-stored';
    throw err;
  }
}

/** PostgreSQL's default name for the receipts table's primary key (migrations/20261201220000-initial-schema.ts). */
const RECEIPTS_KEY = 'receipts_pkey';
