import { setImmediate as yieldTurn } from 'node:timers/promises';
import type { Db } from '../db/knex.ts';

/**
 * PostgreSQL stamps every row version with the id of the transaction that wrote it (xmin),
 * and appends new versions in write order. Casting spends a code, stores a receipt and
 * stores a ballot in one transaction, so during voting those three rows share an xmin and
 * sit in arrival order: with live database access a code could be tied to its ballot.
 * (PostgreSQL 16 documentation, §5.6 "System Columns" and §73.6 "Heap Only Tuples".)
 *
 * Before the tally we rewrite all of an election's ballots, receipts and codes, sixteen
 * short statements per table, in an order that carries no information (fresh random keys), so every
 * current row version has an xmin of the tally (one per part) and a new position. Dead versions remain on disk
 * until VACUUM reclaims them (vacuumAfterTally); the write-ahead log and backups taken during
 * voting keep them longer. The README's threat model ("Live database access during voting") says so.
 */
export async function rewriteVotingRows(db: Db, electionId: string): Promise<void> {
  // Cast tokens only served retries during voting; kept, they would share each cast's xmin.
  await db('cast_tokens').where({ election_id: electionId }).delete();
  // Sixteen short statements per table rather than one long one, so the embedded database's single
  // connection is never held for long. A part is chosen by random bits (the first hex digit of the
  // ballot's random id, which its new id keeps; the first byte of a keyed hash), so which part a row
  // was rewritten in, and so its new xmin, says nothing about when it was cast.
  for (let part = 0; part < PARTS; part++) {
    const digit = part.toString(16);
    await db.raw(
      `WITH moved AS (DELETE FROM ballots WHERE election_id = ? AND id >= ?::uuid AND id <= ?::uuid RETURNING election_id, sealed)
       INSERT INTO ballots (id, election_id, sealed)
       SELECT overlay(gen_random_uuid()::text placing ? from 1 for 1)::uuid, election_id, sealed FROM moved ORDER BY gen_random_uuid()`,
      [electionId, `${digit}0000000-0000-0000-0000-000000000000`, `${digit}fffffff-ffff-ffff-ffff-ffffffffffff`, digit],
    );
    await db.raw(
      `WITH moved AS (DELETE FROM receipts WHERE election_id = ? AND get_byte(receipt_hash, 0) / 16 = ? RETURNING election_id, receipt_hash)
       INSERT INTO receipts (election_id, receipt_hash)
       SELECT election_id, receipt_hash FROM moved ORDER BY gen_random_uuid()`,
      [electionId, part],
    );
    await db.raw(
      `WITH moved AS (DELETE FROM ballot_codes WHERE election_id = ? AND get_byte(code_hash, 0) / 16 = ? RETURNING election_id, code_hash, spent, revoked)
       INSERT INTO ballot_codes (election_id, code_hash, spent, revoked)
       SELECT election_id, code_hash, spent, revoked FROM moved ORDER BY gen_random_uuid()`,
      [electionId, part],
    );
    await yieldTurn();
  }
}

const PARTS = 16;

/** Lets PostgreSQL reclaim the dead row versions left by rewriteVotingRows. Runs outside any transaction. */
export async function vacuumAfterTally(db: Db): Promise<void> {
  await db.raw('VACUUM ballots, receipts, ballot_codes');
}
