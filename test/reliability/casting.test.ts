import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { checkReceipt } from '../../src/elections/checkReceipt.ts';
import type { RunningServer } from '../helpers/server.ts';
import {
  PG_URL,
  cast,
  contextFor,
  keyDirOf,
  countRows,
  launch,
  memberAddress,
  memberSession,
  prepareCast,
  sendCast,
  pool,
  postgresTarget,
  prepareElection,
  record,
  sharedSecrets,
  type Target,
} from './_harness.ts';

/** Double spend and many voters, on real PostgreSQL, through real server processes on loopback. */
describe.runIf(PG_URL)('casting under load [postgres]', () => {
  const secrets = sharedSecrets();
  let target: Target;
  let a: RunningServer;
  let b: RunningServer;

  beforeAll(async () => {
    target = await postgresTarget(secrets.env);
    await prepareElection(target, secrets.pepper, secrets.seed, 1); // migrates before two servers start
    // Members are many clients, as in a real vote: each sends its own address through the loopback proxy.
    [a, b] = await Promise.all([launch(target, { TRUST_PROXY: 'loopback' }), launch(target, { TRUST_PROXY: 'loopback' })]);
  });
  afterAll(async () => {
    await Promise.all([a?.stop(), b?.stop()]);
    await target?.dispose();
  });

  for (const instances of [1, 2] as const) {
    it(`200 concurrent casts of one code on ${instances} instance(s): exactly one ballot`, async () => {
      const f = await prepareElection(target, secrets.pepper, secrets.seed, 1);
      const servers = instances === 1 ? [a] : [a, b];
      const members = await Promise.all(servers.map((s) => memberSession(s.url, f.id)));
      // Each of 200 browsers reads the same code's ballot back first (no code-status oracle before a cast); then all cast at once.
      const prepared = await pool(200, 16, 120_000, (i) =>
        prepareCast(servers[i % servers.length]!.url, members[i % servers.length]!, f.id, f.codes[0]!, [i % 4]),
      );
      expect(prepared.filter(Boolean)).toHaveLength(200);
      const results = await Promise.all(prepared.map((p) => sendCast(p)));
      const ok = results.filter((r) => r.status === 200);
      const receipts = new Set(ok.map((r) => r.receipt));
      const db = target.open();
      try {
        expect(await countRows(db, 'ballots', f.id)).toBe(1);
        expect(await countRows(db, 'receipts', f.id)).toBe(1);
      } finally {
        await db.close();
      }
      expect(receipts.size).toBe(1);
      const serverErrors = results.filter((r) => r.status >= 500).length;
      expect(serverErrors).toBe(0);
      expect(results.every((r) => r.status === 200 || (r.status >= 400 && r.status < 500))).toBe(true);
      record(`double spend, ${instances} instance(s)`, {
        requests: results.length,
        accepted: receipts.size,
        rejected: results.length - ok.length,
        duplicated: receipts.size - 1,
        lost: 0,
        serverErrors,
      });
    });
  }

  it('2,000 codes cast by 50 clients across two instances: 2,000 ballots, 2,000 distinct receipts, every one found', async () => {
    const f = await prepareElection(target, secrets.pepper, secrets.seed, 2000);
    const servers = [a, b];
    const members = await Promise.all(Array.from({ length: 50 }, (_x, c) => memberSession(servers[c % 2]!.url, f.id, memberAddress(c))));
    const results = await pool(f.codes.length, 50, 200_000, (i, c) =>
      cast(servers[c % 2]!.url, members[c]!, f.id, f.codes[i]!, [i % 4, (i + 1) % 4]),
    );
    expect(results.filter(Boolean)).toHaveLength(2000); // the time bound was not hit
    const receipts = results.map((r) => r.receipt).filter((r): r is string => r !== null);
    const distinct = new Set(receipts);
    const db = target.open();
    try {
      const ctx = contextFor(db, secrets.pepper, secrets.seed, keyDirOf(target));
      expect(await countRows(db, 'ballots', f.id)).toBe(2000);
      expect(await countRows(db, 'ballot_codes', f.id, { spent: true })).toBe(2000);
      let found = 0;
      for (const r of distinct) if (await checkReceipt(ctx, { electionId: f.id, receipt: r })) found++;
      expect(found).toBe(2000);
    } finally {
      await db.close();
    }
    expect(receipts).toHaveLength(2000);
    expect(distinct.size).toBe(2000);
    const serverErrors = results.filter((r) => r.status >= 500).length;
    record('2,000 codes by 50 clients', {
      requests: 2000,
      accepted: distinct.size,
      rejected: 2000 - receipts.length,
      lost: 2000 - distinct.size,
      duplicated: receipts.length - distinct.size,
      serverErrors,
    });
  });
});
