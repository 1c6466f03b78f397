import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeAndTally } from '../../../src/elections/closeAndTally.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { PASSPHRASE, scene, type Scene } from './_fixtures.ts';
import { castAll, knownProfile } from './_profile.ts';

/**
 * PostgreSQL 16 documentation §5.6 (System Columns): xmin is the id of the inserting transaction.
 * A cast writes the spent code, the receipt and the ballot in one transaction, so before the
 * tally they share xmins; after it, nothing of the kind may be left to join on.
 */
async function sharedXmins(db: TestDatabase, electionId: string): Promise<number> {
  const r = await db.knex.raw(
    `SELECT count(*)::int AS n FROM ballots b
       JOIN ballot_codes c ON c.election_id = b.election_id AND c.xmin = b.xmin AND c.spent
      WHERE b.election_id = ?`,
    [electionId],
  );
  return Number(r.rows[0].n);
}

async function distinctXmins(db: TestDatabase, table: string, electionId: string): Promise<number> {
  const r = await db.knex.raw(`SELECT count(DISTINCT xmin::text)::int AS n FROM ?? WHERE election_id = ?`, [table, electionId]);
  return Number(r.rows[0].n);
}

describe.each(engines)('the tally leaves no transaction-id link between codes and ballots [%s]', (engine) => {
  let db: TestDatabase;
  let s: Scene;
  const profile = knownProfile(40, 5);
  beforeAll(async () => {
    db = await freshDatabase(engine);
    s = await scene(db);
    await castAll(s, profile.ballots);
  });
  afterAll(() => db.dispose());

  it('every spent code shares an xmin with a ballot before the tally (the check can fail)', async () => {
    expect(await sharedXmins(db, s.electionId)).toBe(40);
    expect(await distinctXmins(db, 'ballots', s.electionId)).toBe(40);
  });

  it('after the tally rows carry one xmin per random part and none is shared across tables; content is kept', async () => {
    const before = await db.knex('ballots').where({ election_id: s.electionId }).select('sealed');
    const hex = (rows: Array<Record<string, Uint8Array>>, col: string) => rows.map((r) => Buffer.from(r[col]!).toString('hex')).sort();
    const receiptsBefore = hex(await db.knex('receipts').where({ election_id: s.electionId }), 'receipt_hash');
    const codesBefore = hex(await db.knex('ballot_codes').where({ election_id: s.electionId }), 'code_hash');
    s.clock.set('2026-06-08T08:00:00Z');
    await closeAndTally(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, passphrase: PASSPHRASE });
    // Rewritten in sixteen short statements per table: one xmin per part, the part chosen by random bits.
    for (const table of ['ballots', 'receipts', 'ballot_codes']) {
      expect(await distinctXmins(db, table, s.electionId)).toBeLessThanOrEqual(16);
    }
    expect(await sharedXmins(db, s.electionId)).toBe(0);
    const perPart = await db.knex.raw(
      `SELECT substr(id::text, 1, 1) AS part, count(DISTINCT xmin::text)::int AS n FROM ballots WHERE election_id = ? GROUP BY 1`,
      [s.electionId],
    );
    for (const r of perPart.rows as Array<{ n: number }>) expect(r.n).toBe(1);
    const after = await db.knex('ballots').where({ election_id: s.electionId }).select('sealed');
    const key = (r: { sealed: Uint8Array }) => Buffer.from(r.sealed).toString('hex');
    expect(after.map(key).sort()).toEqual(before.map(key).sort());
    expect(hex(await db.knex('receipts').where({ election_id: s.electionId }), 'receipt_hash')).toEqual(receiptsBefore);
    expect(hex(await db.knex('ballot_codes').where({ election_id: s.electionId }), 'code_hash')).toEqual(codesBefore);
    const spent = await db.knex('ballot_codes').where({ election_id: s.electionId, spent: true }).count({ n: '*' });
    expect(Number(spent[0]?.n)).toBe(40);
  });
});
