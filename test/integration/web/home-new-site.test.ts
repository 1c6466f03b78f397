import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testApp } from '../../helpers/app.ts';
import { testClock } from '../../helpers/context.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { createFirstOrganiser } from '../../../src/accounts/firstRun.ts';
import { csrfFrom, organiseContext, PASSWORD } from './organiseSupport.ts';

/**
 * The README's first step says the home page of a new site offers the sample elections: a newcomer
 * who opens the address finds the button there, without knowing it is behind "Sign in to organise". Once
 * the site has a real organiser the home page offers it no more.
 */
describe.each(engines)('the home page of a new site [%s]', (engine) => {
  let db: TestDatabase;
  let ctx: UseCaseContext;
  let app: ReturnType<typeof testApp>;
  beforeAll(async () => {
    db = await freshDatabase(engine);
    ctx = organiseContext(db, testClock('2026-06-01T09:00:00Z'));
    app = testApp(ctx);
  });
  afterAll(async () => db.dispose());

  it('offers "Explore with sample elections" and the set-up link, and the button works from there', async () => {
    const agent = request.agent(app);
    const home = await agent.get('/').expect(200);
    expect(home.text).toMatch(
      /<form method="post" action="\/organise\/first-run\/demo" class="inline">\s*<input type="hidden" name="_csrf" value="[^"]+">\s*<button type="submit">Explore with sample elections<\/button>/,
    );
    expect(home.text).toContain('<a href="/organise/first-run">Set up the first organiser account</a>');
    // The button posts from the home page itself, with the home page's token.
    const token = await csrfFrom(agent, '/');
    const res = await agent.post('/organise/first-run/demo').type('form').send({ _csrf: token });
    expect([res.status, res.headers.location]).toEqual([303, '/organise/demo']);
    // The demo login does not close the first run, so the offer stays until a real organiser exists.
    expect((await request(app).get('/').expect(200)).text).toContain('Explore with sample elections');
  });

  it('offers neither once a real organiser exists', async () => {
    await createFirstOrganiser(ctx, { email: 'secretary@tenants.example', password: PASSWORD });
    const home = await request(app).get('/').expect(200);
    expect(home.text).not.toContain('Explore with sample elections');
    expect(home.text).not.toContain('/organise/first-run');
    expect(home.text).toContain('Vote with your ballot code');
  });
});
