import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { BallotUnreadable } from '../../../src/custody/index.ts';
import { secretKeyFromRow } from '../../helpers/storedKeys.ts';
import { closeAndTally } from '../../../src/elections/closeAndTally.ts';
import { ElectionNotOpen } from '../../../src/elections/errors.ts';
import { countApprovals } from '../../../src/elections/tallyCounter.ts';
import { toBuffer } from '../../../src/db/knex.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { PASSPHRASE, electionRow, scene } from './_fixtures.ts';
import { castAll } from './_profile.ts';

describe.each(engines)('tally edge cases [%s]', (engine) => {
  let db: TestDatabase;
  beforeAll(async () => {
    db = await freshDatabase(engine);
  });
  afterAll(() => db.dispose());
  it('counts a ballot it cannot open as unreadable rather than skipping it (in both paths)', async () => {
    const other = await scene(db);
    await castAll(other, [[0], [1, 2]]);
    const row = await db.knex('ballots').where({ election_id: other.electionId }).first();
    const bent = toBuffer(row.sealed);
    bent[bent.length - 1]! ^= 1;
    await db.knex('ballots').where({ id: row.id }).update({ sealed: bent });
    const stored = await electionRow(db, other.electionId);
    const secretKey = await secretKeyFromRow(other.ctx, other.electionId, stored.wrapped_key, PASSPHRASE);
    for (const threads of [0, 2]) {
      const t = await countApprovals(db.knex, {
        electionId: other.electionId,
        publicKey: toBuffer(stored.public_key),
        secretKey,
        shredKey: await other.ctx.keyFiles.read(other.electionId),
        optionCount: 5,
        threads,
      });
      expect([t.ballots, t.unreadable]).toEqual([2, 1]);
    }
    other.clock.set('2026-06-09T00:00:00Z');
    const err = await closeAndTally(other.ctx, { electionId: other.electionId, organiserId: other.organiserId, passphrase: PASSPHRASE }).then(
      () => null,
      (e: unknown) => e,
    );
    expect(err).toBeInstanceOf(BallotUnreadable);
    expect([(err as BallotUnreadable).unreadable, (err as BallotUnreadable).examined]).toEqual([1, 2]);
    const after = await electionRow(db, other.electionId);
    // Voting was closed when the tally was queued (its time had passed); the draw rolled back, nothing drawn.
    expect([after.state, after.result, after.tallied_at, after.tally_failure, after.tally_claim]).toEqual([
      'closed',
      null,
      null,
      'BallotUnreadable',
      null,
    ]);
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
