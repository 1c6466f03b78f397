import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Agent } from 'supertest';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testApp } from '../../helpers/app.ts';
import { testClock } from '../../helpers/context.ts';
import { castBallot } from '../../../src/elections/castBallot.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { issueCodes } from '../../../src/elections/issueCodes.ts';
import { openElection } from '../../../src/elections/openElection.ts';
import { draftElection, makeOrganiser, organiseContext, signedIn } from './organiseSupport.ts';

/**
 * A live exact count tells an organiser who watches a member vote whether they voted. The test is
 * differential: two elections alike in everything but the ballots cast (none in one, three in the
 * other) must give the organiser the same pages, word for word, until the result is drawn.
 */
describe.each(engines)('no exact turnout for the organiser before the draw [%s]', (engine) => {
  let db: TestDatabase;
  let ctx: UseCaseContext;
  const clock = testClock('2026-06-01T09:00:00Z');
  let agent: Agent;
  let me: { id: string; email: string };
  let app: ReturnType<typeof testApp>;
  const quiet = { id: '' };
  const busy = { id: '' };

  beforeAll(async () => {
    db = await freshDatabase(engine);
    ctx = organiseContext(db, clock);
    app = testApp(ctx);
    me = await makeOrganiser(ctx, 'secretary@tenants.example');
    for (const e of [quiet, busy]) {
      e.id = await draftElection(ctx, me.id, { opensAt: new Date('2026-06-01T10:00:00Z'), publishTurnout: true });
      await issueCodes(ctx, { electionId: e.id, organiserId: me.id, count: 5 });
      await openElection(ctx, { electionId: e.id, organiserId: me.id, mode: 'schedule' });
    }
    clock.set('2026-06-10T12:00:00Z');
    const { codes } = await issueCodes(ctx, { electionId: busy.id, organiserId: me.id, count: 3 });
    await issueCodes(ctx, { electionId: quiet.id, organiserId: me.id, count: 3 });
    for (const code of codes) await castBallot(ctx, { electionId: busy.id, code, approvals: [0] });
  });
  afterAll(async () => {
    await db.dispose();
  });

  async function page(id: string, step: string) {
    const res = await agent.get(`/organise/elections/${id}${step}`);
    const body = res.text
      .split(id)
      .join('ID')
      .replace(/name="_csrf" value="[^"]+"/g, '');
    return { status: res.status, body };
  }

  for (const [phase, when] of [
    ['while voting is open', '2026-06-10T12:30:00Z'],
    ['after close, before the draw', '2026-06-12T17:30:00Z'],
  ] as const) {
    it(`every organiser page is the same with 0 and with 3 ballots cast, ${phase}`, async () => {
      clock.set(when);
      agent = await signedIn(app, me.email);
      for (const step of ['', '/codes', '/close', '/tally', '/publish', '/open']) {
        const a = await page(quiet.id, step);
        const b = await page(busy.id, step);
        expect(b.status, step).toBe(a.status);
        expect(b.body, step).toBe(a.body);
      }
      const dash = await page(busy.id, '');
      expect(dash.body).not.toMatch(/ballots? cast/);
      expect(dash.body).toContain('Nobody is shown how many members have voted');
    });
  }
});
