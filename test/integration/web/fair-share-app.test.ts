import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import pino from 'pino';
import { loadConfig } from '../../../src/config.ts';
import { createApp } from '../../../src/web/app.ts';
import { fairShare } from '../../../src/web/middleware/fairShare.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testContext } from '../../helpers/context.ts';

/**
 * The whole site reads each client's pages in that client's own turn and pace
 * (src/web/middleware/fairShare.ts, whose queue, order and pace the unit tests cover): here, mounted
 * in the real app with a share of 1 ms a second and room for one waiting, a client's second
 * page, asked while another client is being served, waits its turn while that other is answered at once, and a client with its queue full
 * is answered by the one error handler (429, Retry-After, the security headers, the site's page).
 * Posts and static files do not wait. Addresses come through X-Forwarded-For from a trusted loopback proxy.
 */
describe.each(engines)('pages are read in each client’s own turn, in the real app [%s]', (engine) => {
  let db: TestDatabase;
  let app: ReturnType<typeof createApp>;
  const turns = fairShare({ msPerSecond: 1, minChargeMs: 1, waiting: 1 });
  beforeAll(async () => {
    db = await freshDatabase(engine);
    const config = loadConfig({ VEILTALLY_DATA_DIR: '/nonexistent-test-dir', TRUST_PROXY: 'loopback' });
    app = createApp({
      config,
      ctx: testContext(db),
      logger: pino({ level: 'silent' }),
      sessionSecret: 'test-session-secret-0123456789abcdef',
      turns,
    });
  });
  afterAll(async () => {
    await db.dispose();
  });

  const get = (path: string, address: string) => request(app).get(path).set('X-Forwarded-For', address);
  async function until(check: () => boolean, what: string) {
    for (let i = 0; i < 2000 && !check(); i++) await new Promise((r) => setTimeout(r, 5));
    if (!check()) throw new Error(`never: ${what}`);
  }

  it('a client past its pace waits its turn, another is answered at once; a full queue gets the site’s “Please wait a moment” page', async () => {
    await get('/', '198.51.100.1').expect(200); // its share for this second used
    await get('/', '198.51.100.3').expect(200); // another client, served just now
    const paced = get('/help', '198.51.100.1').then((r) => r);
    await until(() => turns.clients().get('198.51.100.1')?.pacing === true, 'the second page waiting for its pace');
    const queued = get('/verify', '198.51.100.1').then((r) => r);
    await until(() => turns.clients().get('198.51.100.1')?.waiting === 1, 'the third waiting its turn');
    const refused = await get('/', '198.51.100.1');
    expect(refused.status).toBe(429);
    expect(refused.headers['retry-after']).toBe('5');
    expect(refused.headers['content-security-policy']).toContain("frame-ancestors 'none'");
    expect(refused.headers['cache-control']).toBe('no-store');
    expect(refused.text).toContain('<title>Please wait a moment');
    // Meanwhile another client, static files and posts are not held up.
    await get('/', '198.51.100.2').expect(200);
    await get('/static/style.css', '198.51.100.1').expect(200);
    const post = await request(app).post('/organise/sign-in').set('X-Forwarded-For', '198.51.100.1').type('form').send({ email: 'x@y.example' });
    expect(post.status).not.toBe(429);
    expect(turns.clients().get('198.51.100.1')?.pacing).toBe(true);
    // The waiting pages are answered in turn, not refused.
    expect((await paced).status).toBe(200);
    expect((await queued).status).toBe(200);
    await until(() => turns.clients().size === 0, 'nothing kept once answered');
  });
});
