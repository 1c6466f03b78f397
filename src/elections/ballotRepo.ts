import type { Db } from '../db/knex.ts';
import { toBuffer, toCount } from '../db/knex.ts';

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
 * page is an index range scan and memory stays O(batch)).
 */
export async function* sealedBatches(db: Db, electionId: string, batchSize: number): AsyncGenerator<Buffer[]> {
  let after: string | null = null;
  for (;;) {
    const q = db('ballots').where({ election_id: electionId }).orderBy('id').limit(batchSize).select('id', 'sealed');
    if (after !== null) q.andWhere('id', '>', after);
    const rows: Array<{ id: string; sealed: unknown }> = await q;
    if (rows.length === 0) return;
    after = rows[rows.length - 1]!.id;
    yield rows.map((r) => toBuffer(r.sealed));
    if (rows.length < batchSize) return;
  }
}

export async function deleteBallots(db: Db, electionId: string): Promise<number> {
  return db('ballots').where({ election_id: electionId }).delete();
}
