import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Agent } from 'supertest';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testApp } from '../../helpers/app.ts';
import { testClock } from '../../helpers/context.ts';
import { findElection } from '../../../src/elections/electionRepo.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { castAll, createDraft, openFixture } from '../../helpers/fixtures.ts';
import { releaseDueTurnouts } from '../../../src/elections/liveTurnout.ts';
import { createElectionViaForm, electionForm, makeOrganiser, organiseContext, postForm, signedIn } from './organiseSupport.ts';

/**
 * The election form's live-turnout section: opt-in, its own ε and interval (zod at the edge), stored
 * with the draft, and the error in ballots for the electorate and schedule shown before it is
 * switched on, with a plain "useless" when the error reaches the whole electorate.
 */
describe.each(engines)('election form: live turnout [%s]', (engine) => {
  let db: TestDatabase;
  let ctx: UseCaseContext;
  const clock = testClock('2026-06-01T09:00:00Z');
  let agent: Agent;
  let me: { id: string; email: string };
  let app: ReturnType<typeof testApp>;

  beforeAll(async () => {
    db = await freshDatabase(engine);
    ctx = organiseContext(db, clock);
    app = testApp(ctx);
    me = await makeOrganiser(ctx, 'captain@rowing.example');
    agent = await signedIn(app, me.email);
  });
  afterAll(async () => {
    await db.dispose();
  });

  it('is off by default, and the new form already shows what it would cost in ballots', async () => {
    const res = await agent.get('/organise/elections/new');
    expect(res.status).toBe(200);
    expect(res.text).toContain('id="liveTurnout-off" name="liveTurnout" value="off" checked');
    expect(res.text).toContain('Give the number of voters you expect');
    const id = await createElectionViaForm(agent);
    expect((await findElection(ctx.knex, id))?.liveTurnout).toBeNull();
  });

  it('on: stored with the draft; the edit form shows the error for 40 voters and calls it useless when it is', async () => {
    // 09:00 on 10 June to 18:00 on 12 June, daily: 3 releases; at ε = 0.5 the worst is ±15 ballots (38% of 40).
    const id = await createElectionViaForm(agent, { liveTurnout: 'on', liveTurnoutEpsilon: '0.5', liveTurnoutInterval: '24' });
    expect((await findElection(ctx.knex, id))?.liveTurnout).toEqual({ epsilon: '0.5', intervalHours: 24 });
    const edit = await agent.get(`/organise/elections/${id}/edit`);
    expect(edit.text).toContain('id="liveTurnout-on" name="liveTurnout" value="on" checked');
    expect(edit.text).toMatch(/Any one of the 3 releases is within ±\d+ ballots/);
    expect(edit.text).toContain('of an electorate of 40');
    // Hourly at ε = 0.1 over the same 57 hours: far larger than 40 voters.
    const saved = await postForm(
      agent,
      `/organise/elections/${id}/edit`,
      `/organise/elections/${id}/edit`,
      electionForm({ liveTurnout: 'on', liveTurnoutEpsilon: '0.1', liveTurnoutInterval: '1', passphrase: '', passphraseAgain: '' }),
    );
    expect(saved.status).toBe(303);
    expect((await findElection(ctx.knex, id))?.liveTurnout).toEqual({ epsilon: '0.1', intervalHours: 1 });
    const hourly = await agent.get(`/organise/elections/${id}/edit`);
    expect(hourly.text).toContain('Any one of the 57 releases');
    expect(hourly.text).toContain('would be useless: the error is larger than the whole electorate');
  });

  it('the dashboard shows the released series with its error bound, and no exact count', async () => {
    const f = await createDraft(ctx, me.id, { codes: 6 });
    await ctx.knex('elections').where({ id: f.id }).update({ live_turnout_epsilon: '1', live_turnout_interval_hours: 24 });
    await openFixture(ctx, f);
    const before = await agent.get(`/organise/elections/${f.id}`);
    expect(before.text).toContain('Live turnout (noisy)');
    expect(before.text).toContain('No release yet');
    await castAll(ctx, f, [[0], [1], [2]]);
    clock.advance(2 * 24 * 3600_000 + 60_000);
    expect(await releaseDueTurnouts(ctx)).toBe(2);
    agent = await signedIn(app, me.email); // two days on, the earlier session has lapsed
    const page = await agent.get(`/organise/elections/${f.id}`);
    expect(page.text).toContain('2 of 7 releases');
    expect(page.text).toMatch(/within ±\d+ ballots of the true count/);
    const stored = await ctx.knex('live_turnout_releases').where({ election_id: f.id }).orderBy('step').select('released');
    for (const r of stored) expect(page.text).toContain(`<td>${Number(r.released).toLocaleString('en')}</td>`);
    expect(page.text).not.toContain('Nobody is shown how many members have voted');
    clock.set('2026-06-01T09:00:00Z');
    agent = await signedIn(app, me.email);
  });

  it('refuses a bad ε or interval on the form and keeps what was typed', async () => {
    const res = await postForm(
      agent,
      '/organise/elections/new',
      '/organise/elections/new',
      electionForm({ liveTurnout: 'on', liveTurnoutEpsilon: '0.001', liveTurnoutInterval: '2' }),
    );
    expect(res.status).toBe(400);
    expect(res.text).toContain('The live turnout’s ε must be a decimal from 0.01 to 10');
    expect(res.text).toContain('Choose one of the release intervals listed.');
    expect(res.text).toContain('value="0.001"');
  });
});
