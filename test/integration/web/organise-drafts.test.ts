import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Agent } from 'supertest';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testApp } from '../../helpers/app.ts';
import { testClock } from '../../helpers/context.ts';
import { findElection } from '../../../src/elections/electionRepo.ts';
import { createElectionViaForm, csrfFrom, electionForm, encode, makeOrganiser, organiseContext, postForm, signedIn } from './organiseSupport.ts';

describe.each(engines)('organiser drafts: edit, ownership, CSRF [%s]', (engine) => {
  let db: TestDatabase;
  const clock = testClock('2026-06-01T09:00:00Z');
  let app: ReturnType<typeof testApp>;
  let agent: Agent;
  let other: Agent;
  beforeAll(async () => {
    db = await freshDatabase(engine);
    const ctx = organiseContext(db, clock);
    app = testApp(ctx);
    const me = await makeOrganiser(ctx, 'captain@rowing.example');
    const them = await makeOrganiser(ctx, 'treasurer@rowing.example');
    agent = await signedIn(app, me.email);
    other = await signedIn(app, them.email);
  });
  afterAll(async () => {
    await db.dispose();
  });

  describe('editing a draft', () => {
    let id: string;
    beforeAll(async () => {
      id = await createElectionViaForm(agent, { title: 'Choir programme' });
    });

    it('prefills the form in the election’s own zone and saves changes', async () => {
      const page = await agent.get(`/organise/elections/${id}/edit`);
      expect(page.status).toBe(200);
      expect(page.text).toContain('value="2026-06-10T09:00"');
      expect(page.text).toContain('value="Choir programme"');
      expect(page.text).not.toContain('name="passphrase"');
      const res = await postForm(
        agent,
        `/organise/elections/${id}/edit`,
        `/organise/elections/${id}/edit`,
        electionForm({ title: 'Choir programme 2026', optionLabel: ['Bach', 'Brahms', 'Britten'], optionDescription: ['', '', ''], seats: '2' }),
      );
      expect(res.status).toBe(303);
      expect(res.headers.location).toBe(`/organise/elections/${id}`);
      const e = (await findElection(db.knex, id))!;
      expect(e.title).toBe('Choir programme 2026');
      expect(e.options.map((o) => o.label)).toEqual(['Bach', 'Brahms', 'Britten']);
      expect(e.seats).toBe(2);
      const dash = await agent.get(`/organise/elections/${id}`);
      expect(dash.text).toContain('Edited the draft');
    });

    it('re-renders with errors and changes nothing', async () => {
      const res = await postForm(agent, `/organise/elections/${id}/edit`, `/organise/elections/${id}/edit`, electionForm({ seats: '9' }));
      expect(res.status).toBe(400);
      expect((await findElection(db.knex, id))!.seats).toBe(2);
    });

    it('guidance works for an existing draft', async () => {
      const res = await postForm(agent, `/organise/elections/${id}/edit`, `/organise/elections/${id}/guidance`, electionForm({ intent: 'guidance' }));
      expect(res.status).toBe(200);
      expect(res.text).toContain(`action="/organise/elections/${id}/edit"`);
    });

    it('another organiser gets 404 on every page and action', async () => {
      for (const path of [`/organise/elections/${id}`, `/organise/elections/${id}/edit`]) {
        expect((await other.get(path)).status).toBe(404);
      }
      const token = await csrfFrom(other, '/organise');
      const res = await other
        .post(`/organise/elections/${id}/edit`)
        .type('form')
        .send(encode({ ...electionForm({ title: 'Hijacked' }), _csrf: token }));
      expect(res.status).toBe(404);
      const g = await other
        .post(`/organise/elections/${id}/guidance`)
        .type('form')
        .send(encode({ ...electionForm(), _csrf: token }));
      expect(g.status).toBe(404);
      expect((await findElection(db.knex, id))!.title).toBe('Choir programme 2026');
      expect((await other.get('/organise')).text).not.toContain(id);
    });

    it('an unknown or malformed id is 404', async () => {
      expect((await agent.get('/organise/elections/00000000-0000-4000-8000-000000000000')).status).toBe(404);
      expect((await agent.get('/organise/elections/not-a-uuid/edit')).status).toBe(404);
    });

    it('saving without a CSRF token is refused', async () => {
      const res = await agent
        .post(`/organise/elections/${id}/edit`)
        .type('form')
        .send(encode(electionForm({ title: 'No token' })));
      expect(res.status).toBe(403);
      const forged = await agent
        .post(`/organise/elections/${id}/edit`)
        .type('form')
        .send(encode({ ...electionForm({ title: 'Forged token' }), _csrf: 'f'.repeat(128) }));
      expect(forged.status).toBe(403);
      expect(forged.text).toContain('not sent by this site');
      expect((await findElection(db.knex, id))!.title).toBe('Choir programme 2026');
    });

    it('a cross-site form post is refused even with a token', async () => {
      const token = await csrfFrom(agent, `/organise/elections/${id}/edit`);
      const res = await agent
        .post(`/organise/elections/${id}/edit`)
        .set('Sec-Fetch-Site', 'cross-site')
        .type('form')
        .send(encode({ ...electionForm({ title: 'Cross' }), _csrf: token }));
      expect(res.status).toBe(403);
    });
  });
});
