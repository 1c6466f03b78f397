import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { WrongPassphrase } from '../../../src/custody/index.ts';
import { castBallot } from '../../../src/elections/castBallot.ts';
import { MAX_PREVIEW_MS, closeAndTally, queueTally, revealMinute, runQueuedTally } from '../../../src/elections/closeAndTally.ts';
import { findElection } from '../../../src/elections/electionRepo.ts';
import { AlreadyTallied, ResultNotPublished, TallyInProgress } from '../../../src/elections/errors.ts';
import { issueCodes } from '../../../src/elections/issueCodes.ts';
import { publishDue } from '../../../src/elections/publishResult.ts';
import { shredElection } from '../../../src/elections/shred.ts';
import { TALLY_STALE_MS, electionStatus } from '../../../src/elections/status.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { PASSPHRASE, electionRow, scene } from './_fixtures.ts';

/**
 * Re-roll by withholding: a draw kept private could be shredded and made again in a new election,
 * so the organiser could pick the best of several draws (each costing every member ε more). Every
 * draw is published, by the housekeeping job at the latest. The tally runs off the request and its
 * duration (which depends on turnout) shows nowhere: the result appears at a whole minute.
 */
describe.each(engines)('every draw is published; the tally leaves the request path [%s]', (engine) => {
  let db: TestDatabase;
  beforeAll(async () => {
    db = await freshDatabase(engine);
  });
  afterAll(() => db.dispose());

  async function closedWithBallots(n = 3) {
    const s = await scene(db);
    const { codes } = await issueCodes(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, count: n });
    for (const [i, code] of codes.entries()) await castBallot(s.ctx, { electionId: s.electionId, code, approvals: [i % 5] });
    s.clock.set('2026-06-08T09:00:17.345Z');
    return s;
  }

  it('a drawn result cannot be shredded before publication, and publishes itself at the deadline, once', async () => {
    const s = await closedWithBallots();
    await closeAndTally(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, passphrase: PASSPHRASE });
    await expect(shredElection(s.ctx, { electionId: s.electionId, organiserId: s.organiserId })).rejects.toBeInstanceOf(ResultNotPublished);
    const drawn = (await findElection(db.knex, s.electionId))!;
    expect(drawn.publishDueAt!.getTime() - drawn.resultVisibleAt!.getTime()).toBe(MAX_PREVIEW_MS);

    s.clock.set(new Date(drawn.publishDueAt!.getTime() - 1));
    expect(await publishDue(s.ctx)).toBe(0);
    expect((await electionRow(db, s.electionId)).state).toBe('tallied');
    s.clock.set(drawn.publishDueAt!);
    // Several instances running the job at once publish it once.
    const published = await Promise.all([publishDue(s.ctx), publishDue(s.ctx), publishDue(s.ctx)]);
    expect(published.reduce((a, b) => a + b, 0)).toBe(1);
    const after = await electionRow(db, s.electionId);
    expect(after.state).toBe('published');
    expect(after.shredded_at).not.toBeNull(); // retention "shred at publication" applies as usual
    const events = await db.knex('audit_events').where({ election_id: s.electionId, action: 'published' });
    expect(events).toHaveLength(1);
    expect(events[0].organiser_id).toBeNull(); // the job, not a person
    expect(await publishDue(s.ctx)).toBe(0);
  });

  it('a shorter configured preview is kept, a longer one is cut to 48 hours', async () => {
    for (const [asked, kept] of [
      [3600_000, 3600_000],
      [100 * 3600_000, MAX_PREVIEW_MS],
    ] as const) {
      const s = await closedWithBallots(1);
      await closeAndTally(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, passphrase: PASSPHRASE, previewMs: asked });
      const e = (await findElection(db.knex, s.electionId))!;
      expect(e.publishDueAt!.getTime() - e.resultVisibleAt!.getTime()).toBe(kept);
    }
  });

  it('the draw is stamped with a whole minute at least one minute after queueing, and hidden until then', async () => {
    const s = await closedWithBallots();
    const queuedAt = s.clock.now();
    const q = await queueTally(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, passphrase: PASSPHRASE });
    expect(q.revealAt.toISOString()).toBe('2026-06-08T09:02:00.000Z');
    expect(revealMinute(new Date('2026-06-08T09:00:00.000Z')).toISOString()).toBe('2026-06-08T09:01:00.000Z');
    s.clock.set('2026-06-08T09:00:19Z'); // the count itself is quick
    await runQueuedTally(s.ctx, q);
    const e = (await findElection(db.knex, s.electionId))!;
    for (const at of [e.talliedAt!, e.resultVisibleAt!]) expect(at.toISOString()).toBe('2026-06-08T09:02:00.000Z');
    const event = await db.knex('audit_events').where({ election_id: s.electionId, action: 'tallied' }).first();
    expect(new Date(event.at).toISOString()).toBe('2026-06-08T09:02:00.000Z');
    expect(e.resultVisibleAt!.getTime() - queuedAt.getTime()).toBeGreaterThanOrEqual(60_000);
    expect(electionStatus(e, new Date('2026-06-08T09:01:59.999Z'))).toBe('drawing');
    expect(electionStatus(e, new Date('2026-06-08T09:02:00Z'))).toBe('tallied');
  });

  it('a process that dies mid-tally drew nothing; after the stale limit the tally can be queued again, and a late zombie draws nothing', async () => {
    const s = await closedWithBallots();
    const zombie = await queueTally(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, passphrase: PASSPHRASE });
    // The process "dies" here: zombie never runs (yet). The election is closed and drawing.
    let e = (await findElection(db.knex, s.electionId))!;
    expect([e.state, e.result, electionStatus(e, s.clock.now())]).toEqual(['closed', null, 'drawing']);
    await expect(queueTally(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, passphrase: PASSPHRASE })).rejects.toBeInstanceOf(
      TallyInProgress,
    );
    s.clock.advance(TALLY_STALE_MS);
    e = (await findElection(db.knex, s.electionId))!;
    expect(electionStatus(e, s.clock.now())).toBe('voting-ended');
    const fresh = await queueTally(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, passphrase: PASSPHRASE });
    expect(await runQueuedTally(s.ctx, zombie)).toBeNull(); // its claim was taken over: nothing drawn
    expect((await electionRow(db, s.electionId)).result).toBeNull();
    const outcome = await runQueuedTally(s.ctx, fresh);
    expect(outcome!.winners).toHaveLength(1);
    await expect(closeAndTally(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, passphrase: PASSPHRASE })).rejects.toBeInstanceOf(
      AlreadyTallied,
    );
    expect(await db.knex('audit_events').where({ election_id: s.electionId, action: 'tallied' })).toHaveLength(1);
  });

  it.runIf(engine === 'postgres')('a wrong passphrase is refused while another transaction holds the election row lock (no queue)', async () => {
    const s = await closedWithBallots(1);
    const trx = await db.knex.transaction();
    try {
      await trx('elections').where({ id: s.electionId }).forUpdate().first();
      const attempt = queueTally(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, passphrase: 'not the passphrase at all' });
      const outcome = await Promise.race([
        attempt.then(
          () => 'accepted',
          (err: unknown) => (err instanceof WrongPassphrase ? 'refused' : String(err)),
        ),
        new Promise((r) => setTimeout(() => r('waited for the lock'), 5000)),
      ]);
      expect(outcome).toBe('refused');
    } finally {
      await trx.rollback();
    }
  });
});
