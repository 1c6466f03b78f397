import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { toCount } from '../../../src/db/knex.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testApp } from '../../helpers/app.ts';
import { testClock } from '../../helpers/context.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { createFirstOrganiser } from '../../../src/accounts/firstRun.ts';
import { DEMO_ORGANISER_EMAIL } from '../../../src/accounts/demoOrganiser.ts';
import { SignInFailed } from '../../../src/accounts/errors.ts';
import { signIn } from '../../../src/accounts/signIn.ts';
import { csrfFrom, organiseContext, PASSWORD } from './organiseSupport.ts';

async function count(db: TestDatabase, table: string): Promise<number> {
  return toCount((await db.knex(table).count({ n: '*' }).first())?.n ?? 0);
}

describe.each(engines)('first-run "explore with sample elections" [%s]', (engine) => {
  let db: TestDatabase;
  let ctx: UseCaseContext;
  let app: ReturnType<typeof testApp>;
  beforeAll(async () => {
    db = await freshDatabase(engine);
    ctx = organiseContext(db, testClock('2026-06-01T09:00:00Z'));
    app = testApp(ctx);
  });
  afterAll(async () => db.dispose());
  let demoPassword = '';

  it('offers the button on the first-run page, in a form with a CSRF token', async () => {
    const res = await request(app).get('/organise/first-run');
    expect(res.status).toBe(200);
    expect(res.text).toMatch(/<form method="post" action="\/organise\/first-run\/demo">\s*<input type="hidden" name="_csrf" value="[^"]+">/);
    expect(res.text).toContain('Explore with sample elections');
  });

  it('refuses a post without the CSRF token and adds nothing', async () => {
    const agent = request.agent(app);
    await agent.get('/organise/first-run');
    const res = await agent.post('/organise/first-run/demo').type('form').send({});
    expect(res.status).toBe(403);
    expect(await count(db, 'elections')).toBe(0);
  });

  it('a double-submitted click adds the sample elections once and signs in as the marked demo organiser', async () => {
    const agent = request.agent(app);
    const token = await csrfFrom(agent, '/organise/first-run');
    const [a, b] = await Promise.all([
      agent.post('/organise/first-run/demo').type('form').send({ _csrf: token }),
      agent.post('/organise/first-run/demo').type('form').send({ _csrf: token }),
    ]);
    expect([a.status, b.status]).toEqual([303, 303]);
    expect(a.headers.location).toBe('/organise/demo');
    expect(await count(db, 'elections')).toBe(3); // two sample votes and the roster election
    expect(await count(db, 'organisers')).toBe(1);

    // Each submission has its own signed-in session; exactly one of them is shown the password, once.
    const pages = await Promise.all(
      [a, b].map((r) =>
        request(app)
          .get('/organise/demo')
          .set('Cookie', r.headers['set-cookie'] as unknown as string[]),
      ),
    );
    const shown = pages.map((p) => /Password: <code>([^<]+)<\/code>/.exec(p.text)?.[1]).filter(Boolean);
    expect(shown).toHaveLength(1);
    demoPassword = shown[0]!;
    expect((await signIn(ctx, { email: DEMO_ORGANISER_EMAIL, password: demoPassword })).organiserId).toBeTruthy();

    const page = await agent.get('/organise/demo');
    expect(page.status).toBe(200);
    expect(page.headers['cache-control']).toContain('no-store');
    expect(page.text).toContain('Demo organiser'); // the header's marker
    expect(page.text).toContain('Name the new coxed four (sample election)');
    expect(page.text).toContain('Which three repairs first? (sample election)');
    expect(page.text).toMatch(/href="\/vote\/[0-9a-f-]{36}"/);
    expect(page.text).toMatch(/href="\/results\/[0-9a-f-]{36}"/);
    expect(page.text.match(/<li><code>[^<]+<\/code><\/li>/g)).toHaveLength(5);

    const list = await agent.get('/organise');
    expect(list.text).toContain('Demo organiser');
    expect(list.text).toContain('(sample election)');
  });

  it('shows the demo password once only, and the login then signs in with the marker', async () => {
    // A fresh agent clicking again gets no password: it was shown to the first click only.
    const agent = request.agent(app);
    const token = await csrfFrom(agent, '/organise/first-run');
    expect((await agent.post('/organise/first-run/demo').type('form').send({ _csrf: token })).status).toBe(303);
    const page = await agent.get('/organise/demo');
    expect(page.text).toContain('The password was shown once');
    expect(page.text).not.toMatch(/Password: <code>/);
    // The sign-in page stays reachable while only the demo login exists.
    expect((await request(app).get('/organise/sign-in')).status).toBe(200);
  });

  it('is refused once the site has a real organiser, and the demo login then signs in no more', async () => {
    const demoAgent = request.agent(app);
    const first = await csrfFrom(demoAgent, '/organise/first-run');
    expect((await demoAgent.post('/organise/first-run/demo').type('form').send({ _csrf: first })).status).toBe(303);
    expect((await demoAgent.get('/organise')).status).toBe(200);

    await createFirstOrganiser(ctx, { email: 'secretary@tenants.example', password: PASSWORD });
    // The demo's session is over, and its password no longer works.
    const after = await demoAgent.get('/organise');
    expect(after.status).toBe(303);
    expect(after.headers.location).toMatch(/^\/organise\/sign-in/);
    await expect(signIn(ctx, { email: DEMO_ORGANISER_EMAIL, password: demoPassword })).rejects.toBeInstanceOf(SignInFailed);

    const agent = request.agent(app);
    const token = await csrfFrom(agent, '/organise/sign-in');
    const res = await agent.post('/organise/first-run/demo').type('form').send({ _csrf: token });
    expect(res.status).toBe(409);
    expect(res.text).toContain('Sample elections are offered only on a new site');
  });
});
