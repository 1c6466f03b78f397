import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testClock, testContext } from '../../helpers/context.ts';
import { castAll, createDraft, createOrganiser, openFixture, tallyFixture, type ElectionFixture } from '../../helpers/fixtures.ts';
import { findStatement } from '../../../src/elections/signDraw.ts';
import { extendClosing } from '../../../src/elections/extendClosing.ts';
import { listTurnoutReleases, releaseDueTurnouts } from '../../../src/elections/liveTurnout.ts';
import { jobs } from '../../../src/housekeeping.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { migrateLatest, rollbackAll } from '../../../src/db/migrate.ts';

const DAY = 24 * 3600_000;

/**
 * Housekeeping's live-turnout releases on each engine: made at the schedule's fixed times only,
 * once each, noisy figures stored, and the exact counts kept only while a tree node still needs them.
 * The live turnout is switched on here in the row itself: the election form's field is not built yet.
 */
describe.each(engines)('live turnout releases [%s]', (engine) => {
  let db: TestDatabase;
  let ctx: UseCaseContext;
  const clock = testClock('2026-06-01T09:00:00Z');
  let on: ElectionFixture;
  let off: ElectionFixture;

  beforeAll(async () => {
    db = await freshDatabase(engine);
    ctx = testContext(db, { now: clock.now });
    const organiser = await createOrganiser(ctx);
    on = await createDraft(ctx, organiser, { codes: 8 });
    off = await createDraft(ctx, organiser, { codes: 8 });
    await ctx.knex('elections').where({ id: on.id }).update({ live_turnout_epsilon: '1', live_turnout_interval_hours: 24 });
    await openFixture(ctx, on);
    await openFixture(ctx, off);
  });

  afterAll(async () => {
    await db?.dispose();
  });

  it('its closing time cannot be moved (the schedule and the noise were fixed before opening); another election’s can', async () => {
    const later = new Date(clock.now().getTime() + 10 * DAY);
    await expect(extendClosing(ctx, { electionId: on.id, organiserId: on.organiserId, closesAt: later })).rejects.toThrow(/live turnout/);
    const moved = await createDraft(ctx, on.organiserId, { codes: 1 });
    await openFixture(ctx, moved);
    await expect(extendClosing(ctx, { electionId: moved.id, organiserId: moved.organiserId, closesAt: later })).resolves.toMatchObject({ to: later });
  });

  it('makes nothing before the first release is due, then exactly the due ones, once', async () => {
    await castAll(ctx, on, [[0], [1], [0, 2]]);
    await castAll(ctx, off, [[0]]);
    clock.advance(DAY - 60_000);
    expect(await releaseDueTurnouts(ctx)).toBe(0);
    clock.advance(2 * 60_000);
    expect(await releaseDueTurnouts(ctx)).toBe(1);
    expect(await releaseDueTurnouts(ctx)).toBe(0); // asked again: nothing new
    const [first] = await listTurnoutReleases(ctx, on.id);
    expect(first).toMatchObject({ step: 1, dueAt: new Date('2026-06-02T09:00:00Z') });
    // Release 1 is the node (0, 1]: the exact 3 is kept until the nodes starting later no longer need it.
    const marks = await ctx.knex('live_turnout_marks').where({ election_id: on.id }).select('at', 'exact');
    expect(marks.map((m) => [Number(m.at), Number(m.exact)])).toEqual([[1, 3]]);
    expect(await listTurnoutReleases(ctx, off.id)).toEqual([]);
  });

  it('catches up missed releases in order, and keeps no exact count after the last', async () => {
    await castAll(ctx, on, [[3], [1]], 3);
    clock.advance(2 * DAY); // releases 2 and 3 are due
    expect(await releaseDueTurnouts(ctx)).toBe(2);
    const marks = await ctx.knex('live_turnout_marks').where({ election_id: on.id }).orderBy('at').select('at', 'exact');
    // After release 3 = 0b11: the truncations 3 and 2 are kept, with the exact turnout at each.
    expect(marks.map((m) => [Number(m.at), Number(m.exact)])).toEqual([
      [2, 5],
      [3, 5],
    ]);
    clock.advance(10 * DAY); // past the closing: the rest (7 daily releases in all)
    expect(await releaseDueTurnouts(ctx)).toBe(4);
    const series = await listTurnoutReleases(ctx, on.id);
    expect(series.map((r) => r.step)).toEqual([1, 2, 3, 4, 5, 6, 7]);
    expect(series.at(-1)!.dueAt).toEqual(new Date('2026-06-08T09:00:00Z'));
    expect(series.every((r) => Number.isSafeInteger(r.released))).toBe(true);
    expect((await ctx.knex('live_turnout_marks').select('at')).length).toBe(0);
    expect(await releaseDueTurnouts(ctx)).toBe(0);
  });

  it('the draw charges the live turnout’s ε to whether a member voted and the statement names it with its releases', async () => {
    await tallyFixture(ctx, on, true);
    const stored = await findStatement(ctx.knex, on.id);
    const s = stored!.envelope.statement;
    expect(s.released.liveTurnout).toEqual({ counter: 'binary-tree', epsilon: '1', releases: 7, intervalHours: 24, nodeScale: '3' });
    expect(s.privacy.whetherVoted?.epsilon).toBe('1.5'); // the draw's ε/2 = 0.5 (replace-one) and the live turnout's 1
    const row = await ctx.knex('privacy_ledger').where({ election_id: on.id }).first('how_voted_epsilon', 'whether_voted_epsilon');
    expect(row).toMatchObject({ how_voted_epsilon: '1', whether_voted_epsilon: '1.5' });
    // An election without it is charged as before.
    await tallyFixture(ctx, off, true);
    const plain = (await findStatement(ctx.knex, off.id))!.envelope.statement;
    expect('liveTurnout' in plain.released).toBe(false);
    expect(plain.privacy.whetherVoted?.epsilon).toBe('0.5'); // the draw's ε/2 alone
  });

  it('an election whose settings the core refuses does not hold up the others', async () => {
    const organiser = (await ctx.knex('elections').where({ id: on.id }).first('owner_id')).owner_id as string;
    const broken = await createDraft(ctx, organiser, { codes: 2, opensAt: clock.now(), closesAt: new Date(clock.now().getTime() + 3 * DAY) });
    const fine = await createDraft(ctx, organiser, { codes: 2, opensAt: clock.now(), closesAt: new Date(clock.now().getTime() + 3 * DAY) });
    await ctx.knex('elections').where({ id: broken.id }).update({ live_turnout_epsilon: '1', live_turnout_interval_hours: 2 }); // not a choice
    await ctx.knex('elections').where({ id: fine.id }).update({ live_turnout_epsilon: '1', live_turnout_interval_hours: 24 });
    await openFixture(ctx, broken);
    await openFixture(ctx, fine);
    clock.advance(DAY + 60_000);
    await expect(releaseDueTurnouts(ctx)).rejects.toThrow(/interval/);
    expect(await listTurnoutReleases(ctx, fine.id)).toHaveLength(1);
    expect(await listTurnoutReleases(ctx, broken.id)).toEqual([]);
  });

  it('is one of housekeeping’s jobs', () => {
    expect(jobs.map((j) => j.name)).toContain('release live turnouts that are due');
  });

  it('its migration goes down and up again', async () => {
    const other = await freshDatabase(engine);
    try {
      await rollbackAll(other.knex);
      expect(await other.knex.schema.hasTable('live_turnout_releases')).toBe(false);
      await migrateLatest(other.knex);
      expect(await other.knex.schema.hasTable('live_turnout_marks')).toBe(true);
    } finally {
      await other.dispose();
    }
  });
});
