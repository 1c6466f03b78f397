import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { WrongPassphrase, verifyStatement, publicKeyFromSeed } from '../../../src/custody/index.ts';
import { secretKeyFromRow } from '../../helpers/storedKeys.ts';
import { findStatement } from '../../../src/elections/signDraw.ts';
import { canonicalStatementBytes } from '../../../src/mechanism/index.ts';
import { closeAndTally, type StoredResult } from '../../../src/elections/closeAndTally.ts';
import { AlreadyTallied, ElectionStillOpen } from '../../../src/elections/errors.ts';
import { countApprovals } from '../../../src/elections/tallyCounter.ts';
import { toBuffer } from '../../../src/db/knex.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { PASSPHRASE, electionRow, scene, type Scene } from './_fixtures.ts';
import { castAll, knownProfile } from './_profile.ts';

describe.each(engines)('tally [%s]', (engine) => {
  let db: TestDatabase;
  let s: Scene;
  const profile = knownProfile(500, 5);
  beforeAll(async () => {
    db = await freshDatabase(engine);
    s = await scene(db);
    await castAll(s, profile.ballots);
  });
  afterAll(() => db.dispose());

  async function keys() {
    const row = await electionRow(db, s.electionId);
    const secretKey = await secretKeyFromRow(s.ctx, s.electionId, row.wrapped_key, PASSPHRASE);
    return { publicKey: toBuffer(row.public_key), secretKey, shredKey: await s.ctx.keyFiles.read(s.electionId) };
  }

  it.each([
    ['in this thread, batches of 64', 0, 64],
    ['in 2 worker threads, batches of 37', 2, 37],
  ])('counts 500 known ballots exactly %s', async (_name, threads, batchSize) => {
    const { publicKey, secretKey, shredKey } = await keys();
    const tally = await countApprovals(db.knex, { electionId: s.electionId, publicKey, secretKey, shredKey, optionCount: 5, threads, batchSize });
    expect(new Set(profile.counts).size).toBe(5); // a non-trivial profile: five different counts
    expect(tally.ballots).toBe(500);
    expect(tally.unreadable).toBe(0);
    expect(Array.from(tally.counts)).toEqual(profile.counts);
  });

  it.each([
    ['in this thread', 0],
    ['in a worker thread', 1],
  ])('padded to the codes issued, the work is the same whatever the turnout; dummies count for nothing (%s)', async (_name, threads) => {
    const { publicKey, secretKey, shredKey } = await keys();
    const padded = await countApprovals(db.knex, { electionId: s.electionId, publicKey, secretKey, shredKey, optionCount: 5, threads, padTo: 1234 });
    expect([padded.ballots, padded.opened, padded.unreadable]).toEqual([500, 1234, 0]);
    expect(Array.from(padded.counts)).toEqual(profile.counts);
    // Fewer codes than ballots (cannot happen, but the count never shrinks): no padding.
    const { secretKey: again, shredKey: shredAgain } = await keys();
    const unpadded = await countApprovals(db.knex, {
      electionId: s.electionId,
      publicKey,
      secretKey: again,
      shredKey: shredAgain,
      optionCount: 5,
      threads,
      padTo: 100,
    });
    expect([unpadded.ballots, unpadded.opened]).toEqual([500, 500]);
  });

  it('refuses before close and with a wrong passphrase, then draws once and signs the statement', async () => {
    const input = { electionId: s.electionId, organiserId: s.organiserId, passphrase: PASSPHRASE };
    await expect(closeAndTally(s.ctx, input)).rejects.toBeInstanceOf(ElectionStillOpen);
    s.clock.set('2026-06-08T08:00:00Z');
    await expect(closeAndTally(s.ctx, { ...input, passphrase: 'not the passphrase' })).rejects.toBeInstanceOf(WrongPassphrase);
    expect((await electionRow(db, s.electionId)).state).toBe('open');

    const out = await closeAndTally(s.ctx, input);
    expect(Object.keys(out).sort()).toEqual(['statement', 'winners']);
    expect(out.winners).toHaveLength(1);
    expect(['Heron', 'Kingfisher', 'Otter', 'Swift', 'Grebe']).toContain(out.winners[0]);
    expect(out.statement.turnout).toBeNull(); // publish_turnout is false
    const row = await electionRow(db, s.electionId);
    expect([row.state, row.ballots_counted]).toEqual(['tallied', 500]);
    expect(row.closed_at).not.toBeNull();
    const stored = (typeof row.result === 'string' ? JSON.parse(row.result) : row.result) as StoredResult;
    expect(stored.winners).toEqual(out.winners);
    expect(Object.keys(stored).sort()).toEqual(['statement', 'winners']);
    // RFC 8032 Ed25519 over the RFC 8785 bytes of the published statement, checkable with only the public key.
    const signed = (await findStatement(db.knex, s.electionId))!;
    const bytes = canonicalStatementBytes(signed.envelope.statement);
    expect(Buffer.from(bytes).toString('utf8')).toBe(signed.canonical);
    const sig = Buffer.from(signed.envelope.signature.value, 'base64url');
    const pk = publicKeyFromSeed(s.ctx.secrets.signingSeed);
    expect(signed.envelope.statement.electionId).toBe(s.electionId);
    expect(signed.envelope.statement.released.winners).toEqual(out.winners);
    expect(verifyStatement(bytes, sig, pk)).toBe(true);
    const bent = { ...signed.envelope.statement, released: { ...signed.envelope.statement.released, winners: ['Otter?'] } };
    expect(verifyStatement(canonicalStatementBytes(bent), sig, pk)).toBe(false);

    await expect(closeAndTally(s.ctx, input)).rejects.toBeInstanceOf(AlreadyTallied);
    const events = await db.knex('audit_events').where({ election_id: s.electionId }).orderBy('id');
    expect(events.map((e) => e.action)).toEqual(['tally-key-set', 'codes-issued', 'closed', 'tallied']);
    expect(events.map((e) => e.detail)).toEqual([{}, { count: 500 }, {}, {}]);
  });
});
