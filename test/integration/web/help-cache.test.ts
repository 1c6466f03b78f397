import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testApp } from '../../helpers/app.ts';
import { testContext } from '../../helpers/context.ts';
import { epsilonHelpPages, HELP_NEW_SETTINGS_PER_MINUTE, renderedHelpPages } from '../../../src/web/routes/help/router.ts';

/**
 * The "Choosing ε" page computes its tables from the query: the settings are bounded, each new
 * setting is worked out once (off the request thread) and then served from the cache, and one
 * client can ask for only so many new settings a minute. Cache use is read from the page source's
 * own counters, never from timings.
 */
describe.each(engines)('the ε help page is bounded and cached [%s]', (engine) => {
  let db: TestDatabase;
  let app: ReturnType<typeof testApp>;
  beforeAll(async () => {
    db = await freshDatabase(engine);
    app = testApp(testContext(db), { TRUST_PROXY: 'loopback' });
  });
  afterAll(async () => {
    await epsilonHelpPages.close();
    await db.dispose();
  });

  const from = (address: string, query: string) => request(app).get(`/help/choosing-epsilon?${query}`).set('X-Forwarded-For', address);
  const figures = (html: string) => /<table[\s\S]*<\/table>/.exec(html)![0];

  it('the largest settings are worked out once; the second request is a cache hit with the same tables', async () => {
    // Engines differ in nothing here, so each run takes settings of its own to start from a miss.
    const query = `options=100&seats=${engine === 'pglite' ? 99 : 98}&epsilon=0.125`;
    const before = { tables: { ...epsilonHelpPages.stats }, pages: { ...renderedHelpPages.stats } };
    const first = await from('192.0.2.1', query).expect(200);
    expect(epsilonHelpPages.stats.misses).toBe(before.tables.misses + 1);
    expect(renderedHelpPages.stats.hits).toBe(before.pages.hits);
    const second = await from('192.0.2.1', query).expect(200);
    // Served as rendered: no new table was worked out, and the page cache was hit.
    expect(renderedHelpPages.stats.hits).toBe(before.pages.hits + 1);
    expect(epsilonHelpPages.stats.misses).toBe(before.tables.misses + 1);
    expect(figures(second.text)).toBe(figures(first.text));
    // The same setting written differently is the same entry: "0.1250" is ε = 0.125.
    await from('192.0.2.1', query.replace('0.125', '0.1250')).expect(200);
    expect(renderedHelpPages.stats.hits).toBe(before.pages.hits + 2);
    expect(epsilonHelpPages.stats.misses).toBe(before.tables.misses + 1);
  });

  it('settings past what an election here can have are refused with the defaults, and cost no new work', async () => {
    for (const query of [
      'options=101&seats=1',
      'options=999&seats=998',
      'options=100&seats=100',
      'options=6&epsilon=10.00001',
      'options=6&epsilon=1e3',
    ]) {
      const res = await from('192.0.2.2', query);
      expect(res.status, query).toBe(400);
      expect(res.text).toContain('The figures below use the defaults.');
      expect(res.text).toContain('veiltally bounds --options 6 --epsilon 1');
    }
    const misses = epsilonHelpPages.stats.misses;
    await from('192.0.2.2', 'options=5000').expect(400);
    expect(epsilonHelpPages.stats.misses).toBe(misses);
  });

  it(`one client gets ${HELP_NEW_SETTINGS_PER_MINUTE} new settings a minute; then a 429 naming the wait, while others and cached settings still answer`, async () => {
    const flooder = '203.0.113.9';
    const seats = engine === 'pglite' ? 1 : 2;
    for (let i = 0; i < HELP_NEW_SETTINGS_PER_MINUTE; i++) await from(flooder, `options=${10 + i}&seats=${seats}&epsilon=0.7`).expect(200);
    const refused = await from(flooder, `options=${10 + HELP_NEW_SETTINGS_PER_MINUTE}&seats=${seats}&epsilon=0.7`);
    expect(refused.status).toBe(429);
    expect(Number(refused.headers['retry-after'])).toBeGreaterThan(0);
    expect(refused.text).toContain('Too many new settings on this page');
    // What the cache holds costs nothing, so the same client still gets it.
    await from(flooder, `options=10&seats=${seats}&epsilon=0.7`).expect(200);
    // Another client is not held back by the first one's allowance.
    await from('198.51.100.5', `options=${10 + HELP_NEW_SETTINGS_PER_MINUTE}&seats=${seats}&epsilon=0.7`).expect(200);
  });
});
