import { afterAll, describe, expect, it } from 'vitest';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { openUnderShredKey } from '../../../src/custody/index.ts';
import { openDatabase } from '../../../src/db/knex.ts';
import { migrateLatest } from '../../../src/db/migrate.ts';
import { castBallot } from '../../../src/elections/castBallot.ts';
import { closeAndTally } from '../../../src/elections/closeAndTally.ts';
import { issueCodes } from '../../../src/elections/issueCodes.ts';
import { publishResult } from '../../../src/elections/publishResult.ts';
import { rewriteShreddedTables } from '../../../src/elections/shred.ts';
import { TEST_KDF } from '../../helpers/context.ts';
import { secretKeyFromRow } from '../../helpers/storedKeys.ts';
import { freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { BOAT_NAMES, PASSPHRASE, electionRow, scene } from './_fixtures.ts';
import { carve, pgliteWal, postgresWal } from './_walCarve.ts';

/**
 * A shred must hold against the write-ahead log: a thief with the WAL (or a backup that carries it)
 * and the tally passphrase, after the shred, opens nothing. Both engines; the WAL is read as bytes
 * and carved (_walCarve.ts), with no help from the database.
 */
const BALLOTS = 12;

async function publishedAndShredded(db: TestDatabase) {
  const s = await scene(db, { retentionDays: null });
  const { codes } = await issueCodes(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, count: BALLOTS });
  for (const [i, code] of codes.entries()) await castBallot(s.ctx, { electionId: s.electionId, code, approvals: [i % 5, (i + 2) % 5] });
  s.clock.set('2026-06-08T09:00:00Z');
  await closeAndTally(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, passphrase: PASSPHRASE });
  // What an earlier backup of the key directory holds, and the secret key a teller could have kept.
  const keyBackup = (await s.ctx.keyFiles.has(s.electionId)) ? await s.ctx.keyFiles.read(s.electionId) : null;
  const secretKey = await secretKeyFromRow(s.ctx, s.electionId, (await electionRow(db, s.electionId)).wrapped_key, PASSPHRASE);
  await publishResult(s.ctx, { electionId: s.electionId, organiserId: s.organiserId }); // shreds at publication
  expect(await s.ctx.keyFiles.has(s.electionId)).toBe(false);
  return { ...s, keyBackup, secretKey };
}

/**
 * The thief three ways: with the passphrase only (must open nothing); with a secret key kept from
 * before the shred (the ballot layer must still hold); with a backup of the key directory taken
 * before the shred (opens everything: what remains, as the README says, and proof the carve works).
 */
async function carveThreeWays(wal: Buffer, s: Awaited<ReturnType<typeof publishedAndShredded>>) {
  const base = { wal, electionId: s.electionId, optionCount: BOAT_NAMES.length, passphrase: PASSPHRASE, kdf: TEST_KDF };
  const passphraseOnly = await carve(base);
  const withSecretKey = await carve({ ...base, knownSecretKey: s.secretKey });
  const key = s.keyBackup!;
  const withKeyBackup = await carve({ ...base, outer: { open: (kind, bytes) => openUnderShredKey(key, s.electionId, kind, bytes) } });
  return { passphraseOnly, withSecretKey, withKeyBackup };
}

function expectShredHolds(found: Awaited<ReturnType<typeof carveThreeWays>>) {
  // Control: the carve does find the ballots' bytes in the log (every cast and the tally's rewrite wrote them).
  expect(found.passphraseOnly.ballotCandidates).toBeGreaterThanOrEqual(BALLOTS);
  expect(found.passphraseOnly).toMatchObject({ keysOpened: 0, ballotsOpened: 0 });
  expect(found.withSecretKey.ballotsOpened).toBe(0);
  expect(found.withKeyBackup).toMatchObject({ keysOpened: 1, ballotsOpened: BALLOTS });
}

describe('shredding against the write-ahead log [pglite]', () => {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'vt-shred-wal-'));
  afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

  it('after a shred, nothing carved from the WAL opens with the passphrase', async () => {
    const opened = openDatabase({ engine: 'pglite', dataDir: dir });
    const db: TestDatabase = { ...opened, dispose: () => opened.close() };
    await migrateLatest(db.knex);
    const s = await publishedAndShredded(db);
    await db.dispose();
    const found = await carveThreeWays(pgliteWal(dir), s);
    console.log('pglite WAL carve after the shred', found);
    expectShredHolds(found);
  });
});

describe.runIf(process.env.TEST_DATABASE_URL)('shredding against the write-ahead log [postgres]', () => {
  it('after a shred, nothing carved from the server WAL opens with the passphrase', async () => {
    const db = await freshDatabase('postgres');
    try {
      const s = await publishedAndShredded(db);
      const until = Date.now() + 60_000;
      while ((await rewriteShreddedTables(db.knex, 2_000)) === 'deferred' && Date.now() < until);
      const found = await carveThreeWays(await postgresWal(db), s);
      console.log('postgres WAL carve after the shred', found);
      expectShredHolds(found);
    } finally {
      await db.dispose();
    }
  });
});
