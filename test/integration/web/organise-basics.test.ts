import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Agent } from 'supertest';
import request from 'supertest';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testApp } from '../../helpers/app.ts';
import { testClock } from '../../helpers/context.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { issueCodes } from '../../../src/elections/issueCodes.ts';
import { openElection } from '../../../src/elections/openElection.ts';
import { closeElection } from '../../../src/elections/closeElection.ts';
import { draftElection, makeOrganiser, organiseContext, PASSWORD, postForm, signedIn, csrfFrom, encode } from './organiseSupport.ts';

const HOUR = 3600_000;

/** Issue 11, item 7: the organiser basics, each through its page, with CSRF, audit entries and plain refusals. */
describe.each(engines)('organiser basics [%s]', (engine) => {
  let db: TestDatabase;
  let ctx: UseCaseContext;
  const clock = testClock('2026-06-01T09:00:00Z');
  let app: ReturnType<typeof testApp>;
  let me: { id: string; email: string };
  let them: { id: string; email: string };
  let agent: Agent;
  const audit = async (action: string) => db.knex('audit_events').where({ action }).select();

  beforeAll(async () => {
    db = await freshDatabase(engine);
    ctx = organiseContext(db, clock);
    app = testApp(ctx);
    me = await makeOrganiser(ctx, 'secretary@club.example');
    them = await makeOrganiser(ctx, 'captain@club.example');
    agent = await signedIn(app, me.email);
  });
  afterAll(async () => {
    await db.dispose();
  });

  async function openNow(closesAt = new Date(clock.now().getTime() + 2 * 24 * HOUR), opensAt = clock.now()): Promise<string> {
    const id = await draftElection(ctx, me.id, { opensAt, closesAt });
    await issueCodes(ctx, { electionId: id, organiserId: me.id, count: 2 });
    await openElection(ctx, { electionId: id, organiserId: me.id, mode: opensAt > clock.now() ? 'schedule' : 'now' });
    return id;
  }

  describe('delete a draft', () => {
    it('deletes a draft after a confirmation page, records it, and the draft is gone', async () => {
      const id = await draftElection(ctx, me.id, { title: 'Draft to throw away' });
      const page = `/organise/elections/${id}/delete`;
      expect((await agent.get(page)).text).toContain('Delete this draft?');
      expect((await agent.post(page).type('form').send({})).status).toBe(403); // no CSRF token
      const res = await postForm(agent, page, page, {});
      expect(res.status).toBe(303);
      expect(res.headers.location).toBe('/organise?deleted=1');
      expect(await db.knex('elections').where({ id }).first()).toBeUndefined();
      expect((await agent.get(`/organise/elections/${id}`)).status).toBe(404);
      expect((await audit('draft-deleted')).map((r) => (typeof r.detail === 'string' ? JSON.parse(r.detail) : r.detail).title)).toContain(
        'Draft to throw away',
      );
      expect((await agent.get('/organise?deleted=1')).text).toContain('The draft has been deleted');
    });

    it('refuses to delete an opened election, with the reason', async () => {
      const id = await openNow();
      const res = await postForm(agent, `/organise/elections/${id}`, `/organise/elections/${id}/delete`, {});
      expect(res.status).toBe(409);
      expect(res.text).toContain('Only a draft can be deleted');
      expect(await db.knex('elections').where({ id }).first()).toBeDefined();
    });
  });

  describe('move the closing time later', () => {
    it('extends while voting is open, with an audit entry and a public timeline entry', async () => {
      const id = await openNow(new Date('2026-06-03T17:00:00Z'));
      const page = `/organise/elections/${id}/closing`;
      const form = await agent.get(page);
      expect(form.status).toBe(200);
      expect(form.text).toContain('value="2026-06-03T18:00"'); // Europe/London wall clock
      const res = await postForm(agent, page, page, { closesAt: '2026-06-05T18:00' });
      expect(res.status).toBe(303);
      const row = await db.knex('elections').where({ id }).first('closes_at');
      expect(new Date(row.closes_at).toISOString()).toBe('2026-06-05T17:00:00.000Z');
      const events = (await audit('closing-extended')).filter((r) => r.election_id === id);
      expect(events).toHaveLength(1);
      expect(events[0].public).toBe(true);
      const pub = await request(app).get(`/results/${id}`);
      expect(pub.text).toContain('Closing time extended to');
      expect((await agent.get(`/organise/elections/${id}`)).text).toContain('Moved the closing time to');
    });

    it.each([
      ['earlier than the current close', '2026-06-02T18:00', 'after the current closing time'],
      ['not a time', 'next tuesday', 'Enter a date and time'],
      ['too far ahead', '2027-06-02T18:00', 'at most 90 days'],
    ])('refuses a time %s, keeps what was typed, changes nothing', async (_name, typed, message) => {
      const id = await openNow(new Date('2026-06-03T17:00:00Z'));
      const page = `/organise/elections/${id}/closing`;
      const res = await postForm(agent, page, page, { closesAt: typed });
      expect(res.status).toBe(400);
      expect(res.text).toContain(message);
      expect(res.text).toContain(`value="${typed}"`);
      const row = await db.knex('elections').where({ id }).first('closes_at');
      expect(new Date(row.closes_at).toISOString()).toBe('2026-06-03T17:00:00.000Z');
    });

    it('refuses once voting has ended, by the clock or by hand', async () => {
      const id = await openNow(new Date(clock.now().getTime() + HOUR));
      await closeElection(ctx, { electionId: id, organiserId: me.id });
      const res = await postForm(agent, `/organise/elections/${id}`, `/organise/elections/${id}/closing`, { closesAt: '2026-06-05T18:00' });
      expect(res.status).toBe(409);
      expect((await agent.get(`/organise/elections/${id}/closing`)).status).toBe(409);
    });
  });

  describe('correct the wording', () => {
    it('before voting starts, corrects the title and option descriptions; labels never change', async () => {
      const id = await openNow(new Date('2026-06-05T17:00:00Z'), new Date('2026-06-03T08:00:00Z')); // scheduled
      const page = `/organise/elections/${id}/wording`;
      const form = await agent.get(page);
      expect(form.text).toContain('Voting has not started yet');
      const res = await postForm(agent, page, page, {
        title: 'Tenants’ repair fund 2026',
        description: 'Which repairs should we fund?',
        optionDescription: ['Over stair B only', 'Covered, with locks', ''],
      });
      expect(res.status).toBe(303);
      const e = await db.knex('elections').where({ id }).first('title', 'description');
      expect(e.title).toBe('Tenants’ repair fund 2026');
      const options = await db.knex('options').where({ election_id: id }).orderBy('position').select('label', 'description');
      expect(options.map((o) => o.label)).toEqual(['Roof over stair B', 'Bike shed', 'Laundry room dryers']);
      expect(options[0].description).toBe('Over stair B only');
      const events = (await audit('wording-corrected')).filter((r) => r.election_id === id);
      expect(events).toHaveLength(1);
      expect(events[0].public).toBe(false);
    });

    it('once voting has started, only the description changes, and that goes on the public timeline', async () => {
      const id = await openNow();
      const page = `/organise/elections/${id}/wording`;
      expect((await agent.get(page)).text).toContain('only the description can change');
      const refused = await postForm(agent, page, page, {
        title: 'A new title',
        description: 'x',
        optionDescription: ['', 'Covered, with locks', ''],
      });
      expect(refused.status).toBe(409);
      expect(refused.text).toContain('only the description can change');
      expect((await db.knex('elections').where({ id }).first('title')).title).toBe('Tenants’ repair fund');
      const ok = await postForm(agent, page, page, {
        title: 'Tenants’ repair fund',
        description: 'Corrected: the fund is for this year only.',
        optionDescription: ['', 'Covered, with locks', ''],
      });
      expect(ok.status).toBe(303);
      expect((await db.knex('elections').where({ id }).first('description')).description).toBe('Corrected: the fund is for this year only.');
      const pub = await request(app).get(`/results/${id}`);
      expect(pub.text).toContain('Description corrected');
    });

    it('keeps the typed text when a field is too long', async () => {
      const id = await openNow();
      const page = `/organise/elections/${id}/wording`;
      const res = await postForm(agent, page, page, {
        title: 'Tenants’ repair fund',
        description: 'y'.repeat(5001),
        optionDescription: ['', 'Covered, with locks', ''],
      });
      expect(res.status).toBe(400);
      expect(res.text).toContain('Keep the description to 5000 characters or fewer.');
    });
  });

  describe('share an election', () => {
    it('shares with another organiser, who then sees and runs it; others still get 404', async () => {
      const id = await draftElection(ctx, me.id, { title: 'Shared bike shed vote' });
      const page = `/organise/elections/${id}/sharing`;
      const theirs = await signedIn(app, them.email);
      expect((await theirs.get(`/organise/elections/${id}`)).status).toBe(404);
      const unknown = await postForm(agent, page, page, { email: 'nobody@club.example' });
      expect(unknown.status).toBe(400);
      expect(unknown.text).toContain('no organiser with that email');
      expect(unknown.text).toContain('value="nobody@club.example"');
      const res = await postForm(agent, page, page, { email: ' CAPTAIN@club.example ' });
      expect(res.status).toBe(303);
      expect((await theirs.get(`/organise/elections/${id}`)).status).toBe(200);
      expect((await theirs.get('/organise')).text).toContain('Shared bike shed vote');
      expect((await theirs.get('/organise')).text).toContain('Shared with you');
      expect((await agent.get(`/organise/elections/${id}`)).text).toContain('Shared the election with captain@club.example');
      // And unshared.
      const stop = await postForm(agent, page, `${page}/remove`, { organiserId: them.id });
      expect(stop.status).toBe(303);
      expect((await theirs.get(`/organise/elections/${id}`)).status).toBe(404);
    });
  });

  describe('passwords and organisers', () => {
    it('changes one’s own password with the current one; a wrong current password changes nothing', async () => {
      const who = await makeOrganiser(ctx, 'treasurer@club.example');
      const a = await signedIn(app, who.email);
      const other = await signedIn(app, who.email); // a second session, which must end
      const wrong = await postForm(a, '/organise/account', '/organise/account/password', {
        current: 'not my password',
        password: 'a brand new password',
        passwordAgain: 'a brand new password',
      });
      expect(wrong.status).toBe(400);
      expect(wrong.text).toContain('not your current password');
      expect(wrong.text).not.toContain('a brand new password');
      const mismatch = await postForm(a, '/organise/account', '/organise/account/password', {
        current: PASSWORD,
        password: 'a brand new password',
        passwordAgain: 'a brand new passwort',
      });
      expect(mismatch.status).toBe(400);
      expect(mismatch.text).toContain('not the same');
      const ok = await postForm(a, '/organise/account', '/organise/account/password', {
        current: PASSWORD,
        password: 'a brand new password',
        passwordAgain: 'a brand new password',
      });
      expect(ok.status).toBe(303);
      expect((await a.get('/organise')).status).toBe(200); // this session goes on
      expect((await other.get('/organise')).status).toBe(303); // the other one ended
      // The new password signs in, the old one does not.
      const fresh = request.agent(app);
      const token = await csrfFrom(fresh, '/organise/sign-in');
      expect(
        (
          await fresh
            .post('/organise/sign-in')
            .type('form')
            .send(encode({ _csrf: token, email: who.email, password: PASSWORD, next: '' }))
        ).status,
      ).toBe(401);
      const token2 = await csrfFrom(fresh, '/organise/sign-in');
      expect(
        (
          await fresh
            .post('/organise/sign-in')
            .type('form')
            .send(encode({ _csrf: token2, email: who.email, password: 'a brand new password', next: '' }))
        ).status,
      ).toBe(303);
      expect((await audit('password-changed')).length).toBe(1);
    });

    it('offers no way to set another organiser’s password from the web (the operator resets it on the command line)', async () => {
      const who = await makeOrganiser(ctx, 'cox@club.example');
      const page = `/organise/organisers/${who.id}/password`;
      expect((await agent.get(page)).status).toBe(404);
      const res = await postForm(agent, '/organise/organisers', page, {
        password: 'reset by the secretary',
        passwordAgain: 'reset by the secretary',
      });
      expect(res.status).toBe(404);
      expect(await audit('organiser-password-reset')).toEqual([]);
      await signedIn(app, who.email); // their own password still works
    });

    it('removes another organiser: they cannot sign in, one who alone runs an election stays, and no one can remove themselves', async () => {
      const who = await makeOrganiser(ctx, 'bosun@club.example');
      const lone = await draftElection(ctx, who.id, { title: 'The bosun’s lone election' });
      const refused = await postForm(agent, '/organise/organisers', `/organise/organisers/${who.id}/remove`, {});
      expect(refused.status).toBe(409);
      expect(refused.text).toContain('alone runs 1 election not yet published');
      await db.knex('elections').where({ id: lone }).delete();
      const theirSession = await signedIn(app, who.email);
      const confirm = await agent.get(`/organise/organisers/${who.id}/remove`);
      expect(confirm.text).toContain('Remove bosun@club.example?');
      const res = await postForm(agent, '/organise/organisers', `/organise/organisers/${who.id}/remove`, {});
      expect(res.status).toBe(303);
      expect((await theirSession.get('/organise')).status).toBe(303);
      await expect(signedIn(app, who.email)).rejects.toThrow(/401/);
      expect((await agent.get('/organise/organisers')).text).not.toContain('bosun@club.example');
      const self = await postForm(agent, '/organise/organisers', `/organise/organisers/${me.id}/remove`, {});
      expect(self.status).toBe(409);
      expect(self.text).toContain('cannot remove your own account');
      expect((await audit('organiser-removed')).length).toBe(1);
      // Adding the same email again brings the account back with the new password.
      const again = await postForm(agent, '/organise/organisers', '/organise/organisers', {
        email: 'bosun@club.example',
        password: PASSWORD,
        passwordAgain: PASSWORD,
      });
      expect(again.status).toBe(303);
      await signedIn(app, who.email);
    });
  });

  describe('dates on the dashboard and the election list', () => {
    it('shows the real opening and closing once known', async () => {
      const id = await openNow(new Date('2026-06-04T17:00:00Z'), new Date('2026-06-02T11:00:00Z')); // scheduled for 12:00 London
      let list = await agent.get('/organise');
      expect(list.text).toContain('Opens Tue, 2 Jun 2026, 12:00');
      clock.set(new Date('2026-06-03T10:30:00Z'));
      await closeElection(ctx, { electionId: id, organiserId: me.id });
      agent = await signedIn(app, me.email); // a day later: a new session
      list = await agent.get('/organise');
      expect(list.text).toContain('Opened Tue, 2 Jun 2026, 12:00');
      expect(list.text).toContain('Closed early, Wed, 3 Jun 2026, 11:30');
      const dash = await agent.get(`/organise/elections/${id}`);
      expect(dash.text).toContain('Voting opened');
      expect(dash.text).toContain('Voting closed early');
      expect(dash.text).toContain('Wed, 3 Jun 2026, 11:30');
    });
  });
});
