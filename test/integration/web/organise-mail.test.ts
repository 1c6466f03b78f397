import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Agent } from 'supertest';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { shareElection } from '../../../src/elections/shareElection.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testApp } from '../../helpers/app.ts';
import { testClock } from '../../helpers/context.ts';
import { rosterElection, rosterWith } from '../../helpers/roster.ts';
import { makeOrganiser, organiseContext, postForm, signedIn } from './organiseSupport.ts';

/** The mail page from each organiser's side: the roster's organiser, an election-only co-organiser, a stranger. */
describe.each(engines)('organiser mail page [%s]', (engine) => {
  let db: TestDatabase;
  let ctx: UseCaseContext;
  let owner: Agent;
  let shared: Agent;
  let stranger: Agent;
  let electionId: string;
  beforeAll(async () => {
    db = await freshDatabase(engine);
    ctx = organiseContext(db, testClock('2026-06-01T09:00:00Z'));
    const app = testApp(ctx);
    const me = await makeOrganiser(ctx, 'captain@rowing.example');
    const co = await makeOrganiser(ctx, 'treasurer@rowing.example');
    await makeOrganiser(ctx, 'secretary@tenants.example');
    owner = await signedIn(app, me.email);
    shared = await signedIn(app, co.email);
    stranger = await signedIn(app, 'secretary@tenants.example');
    const rosterId = await rosterWith(ctx, me.id, [{ email: 'bow@rowing.example', name: 'Bow' }, { email: 'stroke@rowing.example' }]);
    electionId = await rosterElection(ctx, me.id, rosterId);
    await shareElection(ctx, { electionId, organiserId: me.id, email: co.email });
  });
  afterAll(() => db.dispose());

  const mailPath = () => `/organise/elections/${electionId}/mail`;

  it('the roster’s organiser sees each address queued, and where mail goes; no ballot-code words', async () => {
    const res = await owner.get(mailPath());
    expect(res.status).toBe(200);
    expect(res.headers['cache-control']).toBe('no-store');
    expect(res.text).toMatch(/bow@rowing\.example<\/td><td>queued<\/td>/);
    expect(res.text).toContain('Sent 0 of 2');
    expect(res.text).toContain('This process sends no mail.'); // the test app has no mailer
  });

  it('an organiser the election (not the roster) was shared with sees counts only; a stranger gets 404', async () => {
    const res = await shared.get(mailPath());
    expect(res.status).toBe(200);
    expect(res.text).not.toContain('bow@rowing.example');
    expect(res.text).toContain('you see counts only');
    expect((await stranger.get(mailPath())).status).toBe(404);
    const post = await postForm(stranger, '/organise', `/organise/elections/${electionId}/mail/resend`, {});
    expect(post.status).toBe(404);
  });

  it('a reminder with bad hours is refused on the form with its message, keeping what was typed', async () => {
    const path = mailPath();
    const res = await postForm(owner, path, `${path}/notices`, { kind: 'closing', hoursBefore: '0' });
    expect(res.status).toBe(400);
    expect(res.text).toContain('Give at least 1 hour.');
    expect(res.text).toMatch(/id="hoursBefore" name="hoursBefore" value="0"/);
    const ok = await postForm(owner, path, `${path}/notices`, { kind: 'closing', hoursBefore: '24' });
    expect(ok.status).toBe(303);
    expect((await owner.get(path)).text).toContain('24 hours before voting closes');
  });
});
