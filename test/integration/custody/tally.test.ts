import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { uniformInt } from 'pure-rand/distribution/uniformInt';
import { xoroshiro128plus } from 'pure-rand/generator/xoroshiro128plus';
import { BallotUnreadable, WrongPassphrase, unwrapElectionKey, verifyStatement, parseWrappedKey } from '../../../src/custody/index.ts';
import { canonicalStatementBytes } from '../../../src/mechanism/index.ts';
import { castBallot } from '../../../src/elections/castBallot.ts';
import { closeAndTally, type StoredResult } from '../../../src/elections/closeAndTally.ts';
import { AlreadyTallied, ElectionNotOpen, ElectionStillOpen } from '../../../src/elections/errors.ts';
import { issueCodes } from '../../../src/elections/issueCodes.ts';
import { countApprovals } from '../../../src/elections/tallyCounter.ts';
import { toBuffer } from '../../../src/db/knex.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { PASSPHRASE, electionRow, scene, type Scene } from './_fixtures.ts';

/** A seeded profile of 500 approval ballots over 5 options (invented data, fixed seed). */
function knownProfile(n: number, d: number): { ballots: number[][]; counts: number[] } {
  const rng = xoroshiro128plus(20260601);
  const ballots: number[][] = [];
  const counts = new Array<number>(d).fill(0);
  for (let i = 0; i < n; i++) {
    const b: number[] = [];
    for (let j = 0; j < d; j++) {
      // option j approved with probability (j + 1) / (d + 2): a clear gradient
      if (uniformInt(rng, 0, d + 1) <= j) {
        b.push(j);
        counts[j]!++;
      }
    }
    ballots.push(b);
  }
  return { ballots, counts };
}

async function castAll(s: Scene, ballots: number[][]): Promise<void> {
  const { codes } = await issueCodes(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, count: ballots.length });
  for (let i = 0; i < ballots.length; i++) {
    await castBallot(s.ctx, { electionId: s.electionId, code: codes[i]!, approvals: ballots[i]! });
  }
}

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
    const secretKey = await unwrapElectionKey(parseWrappedKey(row.wrapped_key), PASSPHRASE, s.electionId);
    return { publicKey: toBuffer(row.public_key), secretKey };
  }

  it.each([
    ['in this thread, batches of 64', 0, 64],
    ['in 2 worker threads, batches of 37', 2, 37],
  ])('counts 500 known ballots exactly %s', async (_name, threads, batchSize) => {
    const { publicKey, secretKey } = await keys();
    const tally = await countApprovals(db.knex, { electionId: s.electionId, publicKey, secretKey, optionCount: 5, threads, batchSize });
    expect(new Set(profile.counts).size).toBe(5); // a non-trivial profile: five different counts
    expect(tally.ballots).toBe(500);
    expect(tally.unreadable).toBe(0);
    expect(Array.from(tally.counts)).toEqual(profile.counts);
  });

  it('counts a ballot it cannot open as unreadable rather than skipping it (in both paths)', async () => {
    const other = await scene(db);
    await castAll(other, [[0], [1, 2]]);
    const row = await db.knex('ballots').where({ election_id: other.electionId }).first();
    const bent = toBuffer(row.sealed);
    bent[bent.length - 1]! ^= 1;
    await db.knex('ballots').where({ id: row.id }).update({ sealed: bent });
    const stored = await electionRow(db, other.electionId);
    const secretKey = await unwrapElectionKey(parseWrappedKey(stored.wrapped_key), PASSPHRASE, other.electionId);
    for (const threads of [0, 2]) {
      const t = await countApprovals(db.knex, {
        electionId: other.electionId, publicKey: toBuffer(stored.public_key), secretKey, optionCount: 5, threads,
      });
      expect([t.ballots, t.unreadable]).toEqual([2, 1]);
    }
    other.clock.set('2026-06-09T00:00:00Z');
    const err = await closeAndTally(other.ctx, { electionId: other.electionId, organiserId: other.organiserId, passphrase: PASSPHRASE })
      .then(() => null, (e: unknown) => e);
    expect(err).toBeInstanceOf(BallotUnreadable);
    expect([(err as BallotUnreadable).unreadable, (err as BallotUnreadable).examined]).toEqual([1, 2]);
    const after = await electionRow(db, other.electionId);
    expect([after.state, after.result, after.tallied_at]).toEqual(['open', null, null]); // rolled back, nothing drawn
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
    expect(Object.keys(stored).sort()).toEqual(['signature', 'signingPublicKey', 'statement', 'winners']);
    // RFC 8032 Ed25519 over the canonical statement bytes, checkable with only the public key.
    const bytes = canonicalStatementBytes(stored.statement);
    const sig = Buffer.from(stored.signature, 'base64');
    const pk = Buffer.from(stored.signingPublicKey, 'base64');
    expect(verifyStatement(bytes, sig, pk)).toBe(true);
    expect(verifyStatement(canonicalStatementBytes({ ...stored.statement, winners: ['Otter?'] }), sig, pk)).toBe(false);

    await expect(closeAndTally(s.ctx, input)).rejects.toBeInstanceOf(AlreadyTallied);
    const events = await db.knex('audit_events').where({ election_id: s.electionId }).orderBy('id');
    expect(events.map((e) => e.action)).toEqual(['tally-key-set', 'codes-issued', 'closed', 'tallied']);
    expect(events.map((e) => e.detail)).toEqual([{}, { count: 500 }, {}, {}]);
  });

  it('with no ballots draws nothing, and publishes turnout 0 only when asked', async () => {
    const empty = await scene(db, { publishTurnout: true, state: 'closed' });
    const out = await closeAndTally(empty.ctx, { electionId: empty.electionId, organiserId: empty.organiserId, passphrase: PASSPHRASE });
    expect(out.winners).toEqual([]);
    expect(out.statement.outcome).toBe('no-ballots');
    expect(out.statement.turnout).toBe(0);
    const draft = await scene(db, { state: 'draft' });
    await expect(
      closeAndTally(draft.ctx, { electionId: draft.electionId, organiserId: draft.organiserId, passphrase: PASSPHRASE }),
    ).rejects.toBeInstanceOf(ElectionNotOpen);
  });
});
