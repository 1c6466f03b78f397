import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { openBallot, openingKey, wipe } from '../../../src/custody/index.ts';
import { innerBallots, secretKeyFromRow } from '../../helpers/storedKeys.ts';
import { toBuffer, toCount } from '../../../src/db/knex.ts';
import { createFirstOrganiser, isFirstRunOpen } from '../../../src/accounts/firstRun.ts';
import { findOrganiser } from '../../../src/accounts/organiserRepo.ts';
import { castBallot } from '../../../src/elections/castBallot.ts';
import { checkReceipt } from '../../../src/elections/checkReceipt.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { findElection } from '../../../src/elections/electionRepo.ts';
import { findGroupByName, listLedger } from '../../../src/elections/ledgerRepo.ts';
import { seedDemo } from '../../../src/demo/seedDemo.ts';
import { DemoRefused } from '../../../src/demo/errors.ts';
import { ROWING_CLUB, TENANTS } from '../../../src/demo/scenarios.ts';
import { inventBallots } from '../../../src/demo/seededBallots.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testContext } from '../../helpers/context.ts';
import { createDraft, createOrganiser } from '../../helpers/fixtures.ts';

async function count(db: TestDatabase, table: string, where: Record<string, unknown> = {}): Promise<number> {
  const row = await db.knex(table).where(where).count({ n: '*' }).first();
  return toCount(row?.n ?? 0);
}

/** Opens every sealed ballot of an election with its tally passphrase, sorted for comparison. */
async function openAll(ctx: UseCaseContext, electionId: string, passphrase: string): Promise<string[]> {
  const e = (await findElection(ctx.knex, electionId))!;
  const sk = await secretKeyFromRow(ctx, e.id, e.wrappedKey, passphrase);
  try {
    const k = openingKey(e.publicKey!, sk, e.id, e.options.length);
    const rows = await ctx.knex('ballots').where({ election_id: e.id }).select('sealed');
    const sealed = await innerBallots(
      ctx,
      e.id,
      e.wrappedKey,
      rows.map((r) => toBuffer(r.sealed)),
    );
    return sealed.map((c) => openBallot(k, c).join(',')).sort();
  } finally {
    wipe(sk);
  }
}

describe.each(engines)('demo seeding [%s]', (engine) => {
  let db: TestDatabase;
  let ctx: UseCaseContext;
  beforeEach(async () => {
    db = await freshDatabase(engine);
    ctx = testContext(db);
  });
  afterEach(async () => db.dispose());

  it('adds an open election with 25 of 40 codes used and a published three-seat result, all owned by a demo organiser', async () => {
    const s = await seedDemo(ctx);
    expect(s.created).toBe(true);
    expect(s.organiser.password).toMatch(/^[a-z0-9]{5}(-[a-z0-9]{5}){3}$/);

    const open = (await findElection(ctx.knex, s.open.id))!;
    expect(open.state).toBe('open');
    expect(open.options).toHaveLength(6);
    expect(open.seats).toBe(1);
    expect(open.epsilon).toBe('1');
    expect(await count(db, 'ballot_codes', { election_id: open.id })).toBe(40);
    expect(await count(db, 'ballot_codes', { election_id: open.id, spent: true })).toBe(25);
    expect(await count(db, 'ballots', { election_id: open.id })).toBe(25);
    // Real sealed ballots: opening them with the printed passphrase gives back the invented electorate.
    const expected = inventBallots(
      `veiltally demo ballots v1/${ROWING_CLUB.title}`,
      ROWING_CLUB.options.map((o) => o.share),
      25,
    );
    expect(await openAll(ctx, open.id, s.open.passphrase)).toEqual(expected.map((b) => b.join(',')).sort());

    const pub = (await findElection(ctx.knex, s.published.id))!;
    expect(pub.state).toBe('published');
    expect(pub.options).toHaveLength(8);
    expect(pub.seats).toBe(3);
    expect(pub.ownerId).toBe(open.ownerId);
    expect(await checkReceipt(ctx, { electionId: pub.id, receipt: s.published.receipt })).toBe(true);
    // The draw was charged to the tenants' own group ledger, once.
    const group = await findGroupByName(ctx.knex, open.ownerId, TENANTS.group);
    expect(group?.id).toBe(s.published.groupId);
    expect(await listLedger(ctx.knex, group!.id)).toHaveLength(1);
    expect((await findElection(ctx.knex, s.open.id))!.groupId).toBe((await findGroupByName(ctx.knex, open.ownerId, ROWING_CLUB.group))!.id);

    const organiser = (await findOrganiser(ctx.knex, open.ownerId))!;
    expect(organiser).toMatchObject({ email: s.organiser.email, demo: true });

    // The printed codes really are unused: a newcomer can vote with one.
    expect(s.open.unusedCodes).toHaveLength(5);
    const { receipt } = await castBallot(ctx, { electionId: open.id, code: s.open.unusedCodes[0]!, approvals: [0, 2] });
    expect(await checkReceipt(ctx, { electionId: open.id, receipt })).toBe(true);
  });

  it('adds nothing the second time, even when two runs start together, and shows the password only once', async () => {
    const [a, b] = await Promise.all([seedDemo(ctx), seedDemo(ctx)]);
    expect([a.created, b.created].sort()).toEqual([false, true]);
    const again = await seedDemo(ctx);
    expect(again.created).toBe(false);
    expect(again.organiser.password).toBeNull();
    expect(again.open.id).toBe(a.open.id);
    expect(again.published.id).toBe(a.published.id);
    // The two sample votes and the roster election, whose six invitations wait for the mail loop.
    expect(await count(db, 'elections')).toBe(3);
    expect(await count(db, 'mail_deliveries', { state: 'queued' })).toBe(6);
    expect(await count(db, 'ballot_codes', { election_id: a.mailed!.id })).toBe(0);
    expect(await count(db, 'organisers')).toBe(1);
    // The published election's ballots were shredded at publication; the open one keeps its 25.
    expect(await count(db, 'ballots')).toBe(ROWING_CLUB.voters);
    expect(await count(db, 'receipts')).toBe(ROWING_CLUB.voters + TENANTS.voters);
  });

  it('refuses a database that holds a real election, and adds nothing', async () => {
    const real = await createOrganiser(ctx, 'secretary@tenants.example');
    await createDraft(ctx, real);
    await expect(seedDemo(ctx)).rejects.toBeInstanceOf(DemoRefused);
    expect(await count(db, 'elections')).toBe(1);
    expect(await count(db, 'organisers')).toBe(1);
  });

  it('leaves the first run open, so the real first organiser can still be created after exploring', async () => {
    await seedDemo(ctx);
    expect(await isFirstRunOpen(ctx.knex)).toBe(true);
    await createFirstOrganiser(ctx, { email: 'secretary@tenants.example', password: 'oars and rudders and tea' });
    expect(await isFirstRunOpen(ctx.knex)).toBe(false);
    // From now on the database holds a real organiser but still no real election: the demo answers as before.
    expect((await seedDemo(ctx)).created).toBe(false);
  });
});
