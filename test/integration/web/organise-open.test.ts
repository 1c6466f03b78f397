import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Agent } from 'supertest';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testApp } from '../../helpers/app.ts';
import { testClock } from '../../helpers/context.ts';
import { castBallot } from '../../../src/elections/castBallot.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { findElection } from '../../../src/elections/electionRepo.ts';
import { ElectionNotOpen } from '../../../src/elections/errors.ts';
import { issueCodes } from '../../../src/elections/issueCodes.ts';
import { draftElection, electionForm, makeOrganiser, organiseContext, postForm, signedIn } from './organiseSupport.ts';

describe.each(engines)('organiser opening [%s]', (engine) => {
  let db: TestDatabase;
  let ctx: UseCaseContext;
  const clock = testClock('2026-06-01T09:00:00Z');
  let app: ReturnType<typeof testApp>;
  let me: { id: string; email: string };
  let agent: Agent;
  const path = (id: string, step = '') => `/organise/elections/${id}${step ? `/${step}` : ''}`;
  const post = (id: string, step: string, fields: Record<string, string> = {}) => postForm(agent, path(id), path(id, step), fields);
  /** Jumps the clock and signs in again, since a jump of days passes the 12-hour session limit. */
  const at = async (iso: string) => {
    clock.set(iso);
    agent = await signedIn(app, me.email);
    await signedIn(app, 'auditor@tenants.example');
  };

  beforeAll(async () => {
    db = await freshDatabase(engine);
    ctx = organiseContext(db, clock);
    app = testApp(ctx);
    me = await makeOrganiser(ctx, 'secretary@tenants.example');
    await makeOrganiser(ctx, 'auditor@tenants.example');
    await at('2026-06-01T09:00:00Z');
  });
  afterAll(async () => {
    await db.dispose();
  });

  describe('opening', () => {
    it('the confirmation shows the electorate warning and refuses to open without a live code', async () => {
      const id = await draftElection(ctx, me.id, { epsilon: '0.1', expectedVoters: 10 });
      const page = await agent.get(path(id, 'open'));
      expect(page.status).toBe(200);
      expect(page.text).toContain('Even a unanimous favourite may not be drawn');
      expect(page.text).toContain('Opening needs at least one code');
      const dash = await agent.get(path(id));
      expect(dash.text).toContain('Even a unanimous favourite may not be drawn'); // shown on the dashboard before opening too
      const res = await post(id, 'open', { mode: 'now' });
      expect(res.status).toBe(409);
      expect(res.text).toContain('Issue at least one ballot code before opening');
      expect((await findElection(db.knex, id))!.state).toBe('draft');
    });

    it('"lock and schedule" keeps the future opening time; casting waits for it; the settings are locked', async () => {
      const id = await draftElection(ctx, me.id);
      const { codes } = await issueCodes(ctx, { electionId: id, organiserId: me.id, count: 2 });
      const res = await post(id, 'open', { mode: 'schedule' });
      expect(res.status).toBe(303);
      expect(res.headers.location).toBe(path(id));
      const e = (await findElection(db.knex, id))!;
      expect(e.state).toBe('open');
      expect(e.opensAt.toISOString()).toBe('2026-06-10T08:00:00.000Z');
      const dash = await agent.get(path(id));
      expect(dash.text).toContain('Scheduled');
      expect(dash.text).toContain('Voting opens in 8 days 23 hours');
      expect(dash.text).toContain('Locked the settings; voting opens');
      await expect(castBallot(ctx, { electionId: id, code: codes[0]!, approvals: [0] })).rejects.toBeInstanceOf(ElectionNotOpen);

      const edit = await agent.get(path(id, 'edit'));
      expect(edit.status).toBe(409);
      expect(edit.text).toContain('would break the promise made to voters');
      const save = await postForm(agent, path(id), path(id, 'edit'), electionForm({ epsilon: '5' }));
      expect(save.status).toBe(409);
      const guidance = await postForm(agent, path(id), path(id, 'guidance'), electionForm());
      expect(guidance.status).toBe(409);
      expect((await findElection(db.knex, id))!.epsilon).toBe('1');
      const again = await post(id, 'open', { mode: 'now' });
      expect(again.status).toBe(409);
      expect(again.text).toContain('already been opened');
    });

    it('"open now" moves a future opening time to now', async () => {
      const id = await draftElection(ctx, me.id);
      await issueCodes(ctx, { electionId: id, organiserId: me.id, count: 1 });
      expect((await post(id, 'open', { mode: 'now' })).status).toBe(303);
      expect((await findElection(db.knex, id))!.opensAt.toISOString()).toBe(clock.now().toISOString());
      expect((await agent.get(path(id))).text).toContain('Open for voting');
    });

    it('refuses a missing mode, a schedule in the past and a closing time already passed', async () => {
      const id = await draftElection(ctx, me.id, { opensAt: new Date('2026-05-01T08:00:00Z'), closesAt: new Date('2026-05-31T08:00:00Z') });
      await issueCodes(ctx, { electionId: id, organiserId: me.id, count: 1 });
      expect((await post(id, 'open', {})).status).toBe(400);
      const page = await agent.get(path(id, 'open'));
      expect(page.text).toContain('The closing time has passed');
      expect(page.text).not.toContain('value="schedule"');
      const res = await post(id, 'open', { mode: 'now' });
      expect(res.status).toBe(409);
      expect(res.text).toContain('closing time has already passed');
      const id2 = await draftElection(ctx, me.id, { opensAt: new Date('2026-05-01T08:00:00Z') });
      await issueCodes(ctx, { electionId: id2, organiserId: me.id, count: 1 });
      const res2 = await post(id2, 'open', { mode: 'schedule' });
      expect(res2.status).toBe(409);
      expect(res2.text).toContain('nothing to schedule');
    });
  });

  it('state-changing posts without a CSRF token are refused', async () => {
    const id = await draftElection(ctx, me.id);
    for (const step of ['open', 'close', 'tally', 'publish']) {
      expect((await agent.post(path(id, step)).type('form').send({ mode: 'now', confirm: 'yes' })).status).toBe(403);
    }
    expect((await findElection(db.knex, id))!.state).toBe('draft');
  });

  it('no state changes over GET', async () => {
    const id = await draftElection(ctx, me.id);
    await issueCodes(ctx, { electionId: id, organiserId: me.id, count: 1 });
    for (const step of ['open', 'close', 'tally', 'publish', 'codes', 'edit', '']) await agent.get(path(id, step));
    expect((await findElection(db.knex, id))!.state).toBe('draft');
    expect((await db.knex('ballot_codes').where({ election_id: id })).length).toBe(1);
  });
});
