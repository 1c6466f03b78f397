import { Writable } from 'node:stream';
import type { Express } from 'express';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadConfig } from '../../../src/config.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { closeAndTally } from '../../../src/elections/closeAndTally.ts';
import { MemberOverBudget } from '../../../src/elections/errors.ts';
import { memberBudgetPreview } from '../../../src/elections/ledger.ts';
import { openElection } from '../../../src/elections/openElection.ts';
import { publishResult } from '../../../src/elections/publishResult.ts';
import { requestReplacement } from '../../../src/elections/replacements.ts';
import { createLogger } from '../../../src/log.ts';
import { createApp } from '../../../src/web/app.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testClock, testContext } from '../../helpers/context.ts';
import { FIXTURE_PASSPHRASE } from '../../helpers/fixtures.ts';
import { rosterElection, rosterWith } from '../../helpers/roster.ts';
import { makeOrganiser } from '../web/organiseSupport.ts';

/**
 * A member granted a replacement code may hold two working codes, so the result protects them at
 * twice the draw's ε (group privacy, Dwork & Roth 2014 Thm 2.2: k records, kε). The per-member
 * ledger charges them so: their spending for that draw is 2ε, the statement's "most any member has
 * spent" counts it, the budget check of the next vote over them counts it, and so does the budget
 * check while the grant's election is still open. Members without a replacement are charged ε.
 * Both engines.
 */
const MEMBERS = [{ email: 'bow@rowing.example' }, { email: 'stroke@rowing.example' }, { email: 'cox@rowing.example' }];
const HOUR = 3600_000;

describe.each(engines)('replacement holders in the per-member ledger [%s]', (engine) => {
  let db: TestDatabase;
  let ctx: UseCaseContext;
  let app: Express;
  const clock = testClock('2026-06-01T09:00:00Z');
  let organiserId: string;
  let rosterId: string;
  let first: string;

  beforeAll(async () => {
    db = await freshDatabase(engine);
    // A budget of 2.5 a year: ε = 1 twice fits a member, ε = 1 three times (or 2 + 1) does not.
    ctx = testContext(db, { now: clock.now, ledgerPolicy: { annualBudget: '2.5', allowOverBudget: false } });
    app = createApp({
      config: loadConfig({ VEILTALLY_DATA_DIR: '/nonexistent-test-dir' }),
      ctx,
      logger: createLogger('debug', new Writable({ write: (_c, _e, cb) => cb() })),
      sessionSecret: 'test-session-secret-0123456789abcdef',
    });
    organiserId = (await makeOrganiser(ctx, 'captain@rowing.example')).id;
    rosterId = await rosterWith(ctx, organiserId, MEMBERS);
    first = await rosterElection(ctx, organiserId, rosterId, { closesInHours: 24 });
  });
  afterAll(() => db.dispose());

  it('while the grant’s election is open, a second vote over the member counts their two codes', async () => {
    await requestReplacement(ctx, { electionId: first, email: 'Bow@Rowing.example' });
    // A second vote over the same roster, opening now at ε = 1: without the replacement each member
    // would reach 1 + 1 = 2 ≤ 2.5; bow, holding two codes in the first, reaches 2 + 1 = 3.
    const second = await rosterElection(ctx, organiserId, rosterId, { open: false, title: 'Club colours' });
    const refused = await openElection(ctx, { electionId: second, organiserId, mode: 'now' }).then(
      () => null,
      (e: unknown) => e,
    );
    expect(refused).toBeInstanceOf(MemberOverBudget);
    expect(String((refused as Error).message)).toContain('ε = 3 for how they voted');
  });

  it('the draw charges the holder 2ε and the others ε; the statement and result page give 2', async () => {
    clock.advance(24 * HOUR + 60_000);
    await closeAndTally(ctx, { electionId: first, organiserId, passphrase: FIXTURE_PASSPHRASE });
    await publishResult(ctx, { electionId: first, organiserId });
    const json = await request(app).get(`/results/${first}/statement.json`);
    expect(json.body.statement.ledger).toMatchObject({ members: 3, replacements: 1, howVotedEpsilon: '2' });
    const page = await request(app).get(`/results/${first}`);
    expect(page.text).toContain('the most any one of them had spent was ε = 2 for how they voted');
    expect(page.text).toContain('A member holding a replacement code is charged twice this draw’s ε');
    // The grants are gone; what the ledger keeps is the member hash with its second code, no address, no code.
    expect(Number((await db.knex('replacement_grants').count({ n: '*' }).first())!.n)).toBe(0);
    const kept = await db.knex('ledger_second_codes').where({ election_id: first }).select('member_hash');
    expect(kept).toHaveLength(1);
    // Append-only, as the rest of the ledger.
    await expect(db.knex('ledger_second_codes').where({ election_id: first }).delete()).rejects.toThrow();
  });

  it('after the draw, the next vote over the roster still counts the holder’s 2ε', async () => {
    const next = await rosterElection(ctx, organiserId, rosterId, { open: false, title: 'Club colours, again' });
    const refused = await openElection(ctx, { electionId: next, organiserId, mode: 'now' }).then(
      () => null,
      (e: unknown) => e,
    );
    expect(refused).toBeInstanceOf(MemberOverBudget);
    // At ε = 0.5 it fits everyone: bow 2 + 0.5 = 2.5.
    const half = await rosterElection(ctx, organiserId, rosterId, { open: false, title: 'Club colours, at half', epsilon: '0.5' });
    await openElection(ctx, { electionId: half, organiserId, mode: 'now' });
    const preview = await memberBudgetPreview(db.knex, ctx, { electionId: half, epsilon: '0.5', neighbour: 'replace-one' });
    expect(preview).toMatchObject({ mostSpent: '2', projected: '2.5', membersOver: 0 });
  });
});
