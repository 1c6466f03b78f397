import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testContext } from '../../helpers/context.ts';
import { testApp } from '../../helpers/app.ts';

describe.each(engines)('health and home page [%s]', (engine) => {
  let db: TestDatabase;
  beforeAll(async () => {
    db = await freshDatabase(engine);
  });
  afterAll(async () => {
    await db.dispose();
  });

  it('GET /healthz checks the database and names the engine', async () => {
    const res = await request(testApp(testContext(db))).get('/healthz');
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ status: 'ok', db: engine });
  });

  it('GET /healthz answers 503 when the database is gone', async () => {
    const broken = await freshDatabase(engine);
    const app = testApp(testContext(broken));
    await broken.dispose();
    const res = await request(app).get('/healthz');
    expect(res.status).toBe(503);
    expect(res.body.status).toBe('unavailable');
  });

  it('renders the home page through the layout with security headers', async () => {
    const res = await request(testApp(testContext(db))).get('/');
    expect(res.status).toBe(200);
    expect(res.text).toContain('<main id="main"');
    expect(res.text).toContain('drawn at random, weighted toward the most approved');
    // OWASP ASVS 5.0 §3.4: CSP without inline script, no referrer to other sites.
    expect(res.headers['content-security-policy']).toContain("script-src 'self'");
    expect(res.headers['content-security-policy']).not.toContain('unsafe-inline');
    expect(res.headers['referrer-policy']).toBe('same-origin');
    expect(res.headers['x-powered-by']).toBeUndefined();
    // A read-only visit creates no session: the only cookie is the anonymous form's signed
    // double-submit token (the home page has a code box), and no session row is written.
    const cookies = (res.headers['set-cookie'] as unknown as string[] | undefined) ?? [];
    expect(cookies.map((c) => c.split('=')[0])).toEqual(cookies.length ? ['veiltally-csrf'] : []);
    expect(cookies.join(';')).not.toMatch(/sid|session/i);
    const sessions = await db.knex('sessions').count({ n: '*' }).first();
    expect(Number(sessions!.n)).toBe(0);
  });

  it('gives a friendly 404 page', async () => {
    const res = await request(testApp(testContext(db))).get('/no-such-page');
    expect(res.status).toBe(404);
    expect(res.text).toContain('We could not find that page.');
  });

  it('serves the stylesheet', async () => {
    const res = await request(testApp(testContext(db))).get('/static/style.css');
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toContain('text/css');
  });
});
