import type { Db } from '../db/knex.ts';
import { toCount } from '../db/knex.ts';

/**
 * Replacement codes (migration 20261203181500). A grant names an election and the keyed hash of
 * a member's address, never an address or a code; a delivery of the election's one 'replacement'
 * mailing names the member, as an invitation's does, and never a code.
 */

/**
 * The election's replacement mailing, made by the first request. Every request writes this row
 * (the upsert takes a new row version even when the mailing exists), whether or not the address
 * is on the roster, so both paths do the same write before the grant.
 */
export async function replacementMailing(db: Db, row: { id: string; electionId: string; at: Date }): Promise<string> {
  const r = await db.raw(
    `INSERT INTO mailings (id, election_id, kind, hours_before, state, created_at, started_at)
     VALUES (CAST(? AS uuid), CAST(? AS uuid), 'replacement', NULL, 'started', ?, ?)
     ON CONFLICT (election_id) WHERE kind = 'replacement' DO UPDATE SET state = 'started'
     RETURNING id`,
    [row.id, row.electionId, row.at, row.at],
  );
  return (r.rows as { id: string }[])[0]!.id;
}

/**
 * One statement, the same for every address: finds the address on the roster, takes the member's
 * one grant (the primary key on (election, member hash) is the cap; ON CONFLICT makes a second
 * grant, from any instance, a no-op) and queues the delivery. An address not on the roster, or a
 * member granted before, matches nothing and writes nothing. Returns whether a delivery was queued.
 */
export async function grantReplacement(
  db: Db,
  input: { electionId: string; rosterId: string; mailingId: string; canonicalEmail: string; memberHash: Buffer },
): Promise<boolean> {
  const r = await db.raw(
    `WITH m AS (SELECT id FROM roster_members WHERE roster_id = CAST(? AS uuid) AND email_canonical = ?),
          g AS (INSERT INTO replacement_grants (election_id, member_hash)
                SELECT CAST(? AS uuid), CAST(? AS bytea) FROM m
                ON CONFLICT DO NOTHING RETURNING election_id)
     INSERT INTO mail_deliveries (mailing_id, member_id, state)
     SELECT CAST(? AS uuid), m.id, 'queued' FROM m, g
     ON CONFLICT DO NOTHING
     RETURNING member_id`,
    [input.rosterId, input.canonicalEmail, input.electionId, input.memberHash, input.mailingId],
  );
  return ((r.rows as unknown[]) ?? []).length > 0;
}

/** Replacements granted so far for an election. */
export async function countReplacements(db: Db, electionId: string): Promise<number> {
  const r = await db('replacement_grants').where({ election_id: electionId }).count({ n: '*' }).first();
  return toCount(r?.n ?? 0);
}

/**
 * In the draw's transaction: the grants' member hashes move to the ledger (ledger_second_codes,
 * each holder charged twice this draw's ε), the grants are deleted, and their number is returned.
 */
export async function takeReplacementCount(db: Db, electionId: string): Promise<number> {
  await db.raw(
    `INSERT INTO ledger_second_codes (election_id, member_hash)
     SELECT election_id, member_hash FROM replacement_grants WHERE election_id = CAST(? AS uuid) ORDER BY member_hash`,
    [electionId],
  );
  return (await db('replacement_grants').where({ election_id: electionId }).delete().returning('election_id')).length;
}
