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
import { csrfFrom, draftElection, encode, makeOrganiser, organiseContext, PASSPHRASE, postForm, signedIn } from './organiseSupport.ts';

describe.each(engines)('organiser close, tally and publish [%s]', (engine) => {
  let db: TestDatabase;
  let ctx: UseCaseContext;
  const clock = testClock('2026-06-01T09:00:00Z');
  let app: ReturnType<typeof testApp>;
  let me: { id: string; email: string };
  let agent: Agent;
  let other: Agent;
  const path = (id: string, step = '') => `/organise/elections/${id}${step ? `/${step}` : ''}`;
  const post = (id: string, step: string, fields: Record<string, string> = {}) => postForm(agent, path(id), path(id, step), fields);
  /** Jumps the clock and signs in again, since a jump of days passes the 12-hour session limit. */
  const at = async (iso: string) => {
    clock.set(iso);
    agent = await signedIn(app, me.email);
    other = await signedIn(app, 'auditor@tenants.example');
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

  describe('a whole election', () => {
    let id: string;
    let codes: string[];
    beforeAll(async () => {
      await at('2026-06-01T09:00:00Z');
      id = await draftElection(ctx, me.id, {
        seats: 2,
        options: [
          { label: 'Roof over stair B', description: '' },
          { label: 'Bike shed', description: '' },
          { label: 'Laundry room dryers', description: '' },
          { label: 'Garden benches', description: '' },
        ],
      });
      ({ codes } = await issueCodes(ctx, { electionId: id, organiserId: me.id, count: 5 }));
      await post(id, 'open', { mode: 'schedule' });
      await at('2026-06-10T12:00:00Z');
      await castBallot(ctx, { electionId: id, code: codes[0]!, approvals: [0, 1] });
      await castBallot(ctx, { electionId: id, code: codes[1]!, approvals: [0] });
      await castBallot(ctx, { electionId: id, code: codes[2]!, approvals: [] });
    });

    it('the dashboard shows codes issued, never turnout or a count per option', async () => {
      const res = await agent.get(path(id));
      expect(res.text).toContain('5 ballot codes issued');
      expect(res.text).not.toContain('3 ballots');
      expect(res.text).toContain('Voting closes in 2 days 5 hours');
      expect(res.text).not.toMatch(/Roof over stair B[^<]*\d+ approvals?/);
    });

    it('the tally waits until voting has ended', async () => {
      const page = await agent.get(path(id, 'tally'));
      expect(page.status).toBe(409);
      expect(page.text).toContain('Not yet');
      const res = await post(id, 'tally', { passphrase: PASSPHRASE });
      expect(res.status).toBe(409);
      expect((await findElection(db.knex, id))!.state).toBe('open');
    });

    it('"close now" asks first, then ends voting early; casting is refused after', async () => {
      const confirm = await agent.get(path(id, 'close'));
      expect(confirm.status).toBe(200);
      expect(confirm.text).toContain('This cannot be undone');
      expect((await agent.post(path(id, 'close')).type('form').send({})).status).toBe(403);
      const res = await post(id, 'close');
      expect(res.status).toBe(303);
      const e = (await findElection(db.knex, id))!;
      expect(e.state).toBe('closed');
      expect(e.closedAt!.toISOString()).toBe('2026-06-10T12:00:00.000Z');
      await expect(castBallot(ctx, { electionId: id, code: codes[3]!, approvals: [1] })).rejects.toBeInstanceOf(ElectionNotOpen);
      const dash = await agent.get(path(id));
      expect(dash.text).toContain('Voting ended early');
      expect(dash.text).toContain('Closed voting early');
      expect((await post(id, 'close')).status).toBe(409);
    });

    it('a wrong or missing passphrase gives a clear error and a retry; nothing is drawn', async () => {
      const empty = await post(id, 'tally', { passphrase: '' });
      expect(empty.status).toBe(400);
      expect(empty.text).toContain('Enter the tally passphrase');
      const wrong = await post(id, 'tally', { passphrase: 'not the passphrase at all' });
      expect(wrong.status).toBe(403);
      expect(wrong.text).toContain('does not unlock this election');
      expect(wrong.text).toContain('name="passphrase"');
      expect(wrong.text).not.toContain('not the passphrase at all');
      expect((await findElection(db.knex, id))!.state).toBe('closed');
    });

    it('the right passphrase queues the draw: "drawing…" refreshes itself until the whole minute, then the preview, without counts', async () => {
      const res = await post(id, 'tally', { passphrase: PASSPHRASE });
      expect(res.status).toBe(303);
      expect(res.headers.location).toBe(path(id, 'tally'));
      const drawn = await drawnRow(id);
      expect(drawn.state).toBe('tallied');
      // Drawn, but not shown before its whole minute, at least a minute after queueing.
      const visible = new Date(drawn.result_visible_at as string);
      expect(visible.getTime() % 60_000).toBe(0);
      expect(visible.getTime() - clock.now().getTime()).toBeGreaterThanOrEqual(60_000);
      const waiting = await agent.get(path(id, 'tally'));
      expect(waiting.status).toBe(200);
      expect(waiting.text).toContain('Drawing the result…');
      // Refreshes itself without script: the HTTP Refresh header, and no timed markup in the page.
      expect(waiting.headers['refresh']).toBe('10');
      expect(waiting.text).not.toContain('http-equiv="refresh"');
      expect(waiting.text).not.toContain('<script');
      expect((await agent.get(path(id))).text).not.toContain('Unlocked the tally and drew the result');
      expect((await agent.get(path(id, 'publish'))).status).toBe(409);
      clock.set(visible);
      const shown = await agent.get(path(id, 'tally'));
      expect(shown.text).not.toContain(PASSPHRASE);
      const e = (await findElection(db.knex, id))!;
      const winners = (e.result as { winners: string[] }).winners;
      expect(winners).toHaveLength(2);
      for (const w of winners) expect(shown.text).toContain(`<li>${w}</li>`);
      expect(shown.text).toContain('drawn at random, weighted toward the most approved options');
      expect(shown.text).toContain('ε/2 = 0.5');
      expect(shown.text).not.toMatch(/\b(approval )?counts?:\s*\d/i);
      expect((await agent.get(path(id))).text).toContain('published automatically');
      // A second tally cannot re-roll it.
      const retry = await post(id, 'tally', { passphrase: PASSPHRASE });
      expect(retry.status).toBe(303);
      expect((await findElection(db.knex, id))!.result).toEqual(e.result);
    });

    it('publishing is final: confirmation first, then published and shredded', async () => {
      const page = await agent.get(path(id, 'publish'));
      expect(page.status).toBe(200);
      expect(page.text).toContain('Publishing is final');
      expect(page.text).toContain('shredded at once');
      const unconfirmed = await post(id, 'publish', {});
      expect(unconfirmed.status).toBe(400);
      expect(unconfirmed.text).toContain('Tick the box');
      expect((await findElection(db.knex, id))!.state).toBe('tallied');
      const res = await post(id, 'publish', { confirm: 'yes' });
      expect(res.status).toBe(303);
      const e = (await findElection(db.knex, id))!;
      expect(e.state).toBe('published');
      expect(e.shreddedAt).not.toBeNull();
      const dash = await agent.get(path(id));
      expect(dash.text).toContain('Published');
      expect(dash.text).toContain(`href="/results/${id}"`);
      for (const what of [
        'Created the election',
        'Issued 5 ballot codes',
        'Locked the settings',
        'Closed voting early',
        'Unlocked the tally and drew the result',
        'Published the result',
        'Shredded the election key',
      ]) {
        expect(dash.text).toContain(what);
      }
      expect(dash.text).toContain('secretary@tenants.example');
      // Sent again, or the page reloaded: the election's own page, which says it is published.
      for (const again of [await post(id, 'publish', { confirm: 'yes' }), await agent.get(path(id, 'publish'))]) {
        expect(again.status).toBe(303);
        expect(again.headers.location).toBe(path(id));
      }
    });

    it('every action page is 404 for another organiser, GET and POST', async () => {
      for (const step of ['open', 'close', 'tally', 'publish']) expect((await other.get(path(id, step))).status).toBe(404);
      const token = await csrfFrom(other, '/organise');
      for (const step of ['open', 'close', 'tally', 'publish']) {
        const res = await other
          .post(path(id, step))
          .type('form')
          .send(encode({ _csrf: token, mode: 'now', passphrase: PASSPHRASE, confirm: 'yes' }));
        expect(res.status).toBe(404);
      }
    });
  });

  /** The draw runs off the request: wait (in real time) until its transaction has committed. */
  async function drawnRow(id: string) {
    for (let i = 0; i < 200; i++) {
      const row = await db.knex('elections').where({ id }).first();
      if (row.state === 'tallied' || row.tally_failure) return row;
      await new Promise((r) => setTimeout(r, 50));
    }
    throw new Error('the queued tally did not finish');
  }

  it('with zero ballots the result is "no ballots cast; no winner drawn"', async () => {
    await at('2026-06-01T09:00:00Z');
    const id = await draftElection(ctx, me.id, { publishTurnout: true });
    await issueCodes(ctx, { electionId: id, organiserId: me.id, count: 1 });
    await post(id, 'open', { mode: 'now' });
    await at('2026-06-12T17:00:00Z'); // the closing time passes: voting ended without "close now"
    const dash = await agent.get(path(id));
    expect(dash.text).toContain('Voting ended');
    expect(dash.text).toContain('Unlock the tally');
    expect((await post(id, 'tally', { passphrase: PASSPHRASE })).status).toBe(303);
    clock.set(new Date((await drawnRow(id)).result_visible_at));
    const res = await agent.get(path(id, 'tally'));
    expect(res.text).toContain('No ballots cast; no winner drawn.');
    expect(res.text).not.toContain('<ol class="winners">');
  });

  it('rate-limits wrong tally passphrases', async () => {
    await at('2026-06-01T09:00:00Z');
    const id = await draftElection(ctx, me.id);
    await issueCodes(ctx, { electionId: id, organiserId: me.id, count: 1 });
    await post(id, 'open', { mode: 'now' });
    await post(id, 'close');
    // A fresh app has a fresh limiter; sessions live in the database, so signing in there works the same.
    const fresh = await signedIn(testApp(ctx), me.email);
    const statuses: number[] = [];
    for (let i = 0; i < 11; i++)
      statuses.push((await postForm(fresh, path(id), path(id, 'tally'), { passphrase: `wrong passphrase number ${i}` })).status);
    expect(statuses.slice(0, 10)).toEqual(Array(10).fill(403));
    expect(statuses[10]).toBe(429);
  });
});
