import { afterAll, describe, expect, it } from 'vitest';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { openDatabase, toBuffer } from '../../../src/db/knex.ts';
import { migrateLatest } from '../../../src/db/migrate.ts';
import { castBallot } from '../../../src/elections/castBallot.ts';
import { closeAndTally } from '../../../src/elections/closeAndTally.ts';
import { issueCodes } from '../../../src/elections/issueCodes.ts';
import { publishResult } from '../../../src/elections/publishResult.ts';
import { rewriteShreddedTables, shredElection } from '../../../src/elections/shred.ts';
import { freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { PASSPHRASE, electionRow, scene } from './_fixtures.ts';

/**
 * Shredding must hold against a copy of the data files, not only against SQL: after a shred no
 * page of the tables holds the wrapped key (dead row versions included). On PostgreSQL the pages
 * are read with the pageinspect extension (PostgreSQL documentation, F.25 "pageinspect":
 * get_raw_page returns a block as bytea); on the embedded database, the relation files themselves.
 */
async function talliedElection(db: TestDatabase, retentionDays: number | null) {
  const s = await scene(db, { retentionDays });
  const { codes } = await issueCodes(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, count: 4 });
  for (const [i, code] of codes.entries()) await castBallot(s.ctx, { electionId: s.electionId, code, approvals: [i % 3] });
  // A few more row versions of the election, as a real life cycle makes.
  for (let i = 0; i < 3; i++) await db.knex('elections').where({ id: s.electionId }).update({ updated_at: new Date() });
  const row = await electionRow(db, s.electionId);
  // The stored wrapped key is one string under the shred layer (custody/shredLayer.ts).
  const wrapped = (typeof row.wrapped_key === 'string' ? JSON.parse(row.wrapped_key) : row.wrapped_key) as { sealed: string };
  const sealed = (await db.knex('ballots').where({ election_id: s.electionId })).map((r) => toBuffer(r.sealed));
  s.clock.set('2026-06-08T09:00:00Z');
  await closeAndTally(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, passphrase: PASSPHRASE });
  return { s, needle: Buffer.from(wrapped.sealed, 'utf8'), sealed };
}

async function rawPages(db: TestDatabase, table: string): Promise<Buffer> {
  const blocks = Number((await db.knex.raw('SELECT pg_relation_size(?::regclass) / 8192 AS n', [table])).rows[0].n);
  const pages: Buffer[] = [];
  for (let b = 0; b < blocks; b++) pages.push(toBuffer((await db.knex.raw('SELECT public.get_raw_page(?, ?) AS p', [table, b])).rows[0].p));
  return Buffer.concat(pages);
}

describe.runIf(process.env.TEST_DATABASE_URL)('shredding against the data pages [postgres]', () => {
  it('leaves no wrapped key or ciphertext of a shredded election in any page of elections or ballots', async () => {
    const db = await freshDatabase('postgres');
    try {
      await db.knex.raw('CREATE EXTENSION IF NOT EXISTS pageinspect SCHEMA public').catch(async () => {
        // Another test file created it at the same moment.
        await db.knex.raw('SELECT 1 FROM pg_extension WHERE extname = ?', ['pageinspect']);
      });
      for (const path of ['publish', 'shred-later'] as const) {
        const { s, needle, sealed } = await talliedElection(db, path === 'publish' ? null : 30);
        // Control: the pages do hold the wrapped key and the ciphertexts before the shred.
        expect((await rawPages(db, 'elections')).includes(needle)).toBe(true);
        const ballotsBefore = await rawPages(db, 'ballots');
        expect(sealed.every((c) => ballotsBefore.includes(c))).toBe(true);
        await publishResult(s.ctx, { electionId: s.electionId, organiserId: s.organiserId });
        if (path === 'shred-later') await shredElection(s.ctx, { electionId: s.electionId, organiserId: s.organiserId });
        // Sessions of other tests on this server may hold old snapshots: the rewrite is then
        // deferred, and housekeeping repeats it (shredDue), as here, until it is done.
        const until = Date.now() + 90_000;
        while ((await rewriteShreddedTables(db.knex, 2_000)) === 'deferred' && Date.now() < until);
        const elections = await rawPages(db, 'elections');
        const ballots = await rawPages(db, 'ballots');
        expect(elections.includes(needle), path).toBe(false);
        for (const c of sealed) expect(ballots.includes(c), path).toBe(false);
      }
    } finally {
      await db.dispose();
    }
  });
});

describe('shredding against the data files [pglite]', () => {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'vt-shred-'));
  afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

  /** Every relation file (base/, global/); the write-ahead log is left out, and the threat model says so. */
  function dataFiles(): Buffer {
    const out: Buffer[] = [];
    const walk = (d: string) => {
      for (const e of fs.readdirSync(d, { withFileTypes: true })) {
        const p = path.join(d, e.name);
        if (e.isDirectory()) walk(p);
        else out.push(fs.readFileSync(p));
      }
    };
    for (const sub of ['base', 'global']) walk(path.join(dir, 'pglite', sub));
    return Buffer.concat(out);
  }

  it("leaves no wrapped key in the embedded directory's relation files after a shred", async () => {
    const opened = openDatabase({ engine: 'pglite', dataDir: dir });
    const db: TestDatabase = { ...opened, dispose: () => opened.close() };
    await migrateLatest(db.knex);
    const { s, needle } = await talliedElection(db, null);
    await db.knex.raw('CHECKPOINT');
    expect(dataFiles().includes(needle)).toBe(true); // control
    await publishResult(s.ctx, { electionId: s.electionId, organiserId: s.organiserId });
    await db.knex.raw('CHECKPOINT');
    await db.dispose();
    expect(dataFiles().includes(needle)).toBe(false);
  });
});
