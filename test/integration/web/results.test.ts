import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import request from 'supertest';
import type { Express } from 'express';
import { generateReceipt } from '../../../src/custody/index.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { findElection } from '../../../src/elections/electionRepo.ts';
import { publishResult } from '../../../src/elections/publishResult.ts';
import { describeStatement, type PrivacyStatement } from '../../../src/mechanism/index.ts';
import { testApp } from '../../helpers/app.ts';
import { testClock, testContext } from '../../helpers/context.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import {
  castAll,
  createDraft,
  createOrganiser,
  csrfFrom,
  formBody,
  openElectionFixture,
  tallyFixture,
  type FixtureOptions,
} from '../../helpers/fixtures.ts';

const START = '2026-06-01T09:00:00Z';
const DAY = 24 * 3600_000;
const escapeHtml = (s: string) => s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&#34;').replace(/'/g, '&#39;');

describe.each(engines)('public result pages [%s]', (engine) => {
  let db: TestDatabase;
  let ctx: UseCaseContext;
  let app: Express;
  let organiserId: string;
  const clock = testClock(START);

  beforeAll(async () => {
    db = await freshDatabase(engine);
    ctx = testContext(db, { now: clock.now });
    app = testApp(ctx);
    organiserId = await createOrganiser(ctx);
  });
  afterAll(async () => {
    await db.dispose();
  });
  beforeEach(() => clock.set(START));

  /** Opens, casts the given ballots, moves past the close, tallies and (by default) publishes. */
  async function decided(ballots: number[][], o: FixtureOptions = {}, publish = true) {
    const f = await openElectionFixture(ctx, organiserId, { codes: Math.max(ballots.length, 1), ...o });
    const receipts = await castAll(ctx, f, ballots);
    clock.advance(8 * DAY);
    const winners = await tallyFixture(ctx, f, publish);
    const e = await findElection(ctx.knex, f.id);
    const statement = (e!.result as { statement: PrivacyStatement }).statement;
    return { f, receipts, winners, statement };
  }

  it('unknown, malformed and draft ids are 404', async () => {
    const draft = await createDraft(ctx, organiserId);
    for (const id of ['00000000-0000-4000-8000-000000000000', 'nope', draft.id]) {
      await request(app).get(`/results/${id}`).expect(404);
    }
  });

  it('before publication says the result is not published, and when voting closes or closed', async () => {
    const f = await openElectionFixture(ctx, organiserId);
    const open = await request(app).get(`/results/${f.id}`).expect(200);
    expect(open.text).toContain('The result has not been published yet');
    expect(open.text).toContain('Voting is open until');
    expect(open.text).toContain('Voting opened');
    await castAll(ctx, f, [[0], [1]]);
    clock.advance(8 * DAY);
    const closed = await request(app).get(`/results/${f.id}`).expect(200);
    expect(closed.text).toContain('Voting closed on');
    // Tallied is the organiser's private preview: no winner, no statement yet.
    await tallyFixture(ctx, f, false);
    const preview = await request(app).get(`/results/${f.id}`).expect(200);
    expect(preview.text).toContain('The result has not been published yet');
    expect(preview.text).not.toContain('<ol class="winners');
    expect(preview.text).not.toContain('was drawn as the winner');
    expect(preview.text).not.toContain('Check your receipt');
  });

  it('a published result shows the winner, the statement, the bounds, the parameters, the timeline and the caution', async () => {
    const { f, winners, statement } = await decided([[0, 1], [1], [1, 2], [3]], { epsilon: '1.5' });
    const res = await request(app).get(`/results/${f.id}`).expect(200);
    const html = res.text;
    const text = describeStatement(statement);
    expect(winners).toHaveLength(1);
    expect(html).toMatch(new RegExp(`<ol class="winners winners-single">\\s*<li>${winners[0]}</li>\\s*</ol>`));
    expect(html).toContain(escapeHtml(text.headline));
    for (const p of text.paragraphs) expect(html).toContain(escapeHtml(p));
    expect(html).toContain(escapeHtml(text.boundsSentence));
    expect(html).toContain(escapeHtml(text.caution));
    expect(html).toMatch(/<dt>Privacy level<\/dt>\s*<dd>ε = 1.5<\/dd>/);
    expect(html).toMatch(/<dt>Seats<\/dt>\s*<dd>1<\/dd>/);
    expect(html).toMatch(/<dt>Options on the ballot<\/dt>\s*<dd>4<\/dd>/);
    expect(html).toContain('Replace one ballot.');
    expect(html).not.toContain('id="turnout-heading"');
    const timeline = [...html.matchAll(/<span class="timeline-label">([^<]+)<\/span>/g)].map((m) => m[1]);
    expect(timeline).toEqual([
      'Election set up',
      'Voting opened',
      'Voting closed',
      'Sealed ballots counted and the winners drawn',
      'Result published',
      'Sealed ballots and the tally key destroyed',
    ]);
  });

  it('several seats are listed in the order drawn', async () => {
    const { f, winners } = await decided([[0, 1, 2], [1, 2], [2, 3]], { seats: 3, neighbour: 'add-remove' });
    const html = (await request(app).get(`/results/${f.id}`).expect(200)).text;
    expect(html).toContain('Winners, in the order drawn');
    const listed = [...html.matchAll(/<li>([^<]+)<\/li>/g)].map((m) => m[1]).filter((l) => winners.includes(l!));
    expect(listed).toEqual(winners);
    expect(html).toContain('Add or remove one ballot.');
  });

  it('shows turnout only when published, saying it is exact and not protected', async () => {
    const { f } = await decided([[0], [1], [2]], { publishTurnout: true });
    const html = (await request(app).get(`/results/${f.id}`).expect(200)).text;
    expect(html).toContain('3 ballots were cast.');
    expect(html).toContain('This figure is exact and is not protected by the privacy setting');
    expect(html).toContain('Not protected: the exact turnout is published.');
  });

  it('with no ballots says no winner was drawn', async () => {
    const { f } = await decided([]);
    const html = (await request(app).get(`/results/${f.id}`).expect(200)).text;
    expect(html).toContain('No ballots were cast; no winner was drawn.');
    expect(html).not.toContain('<ol class="winners');
  });

  describe('receipt check', () => {
    async function withCsrf(id: string) {
      const agent = request.agent(app);
      const page = await agent.get(`/results/${id}`).expect(200);
      return { agent, csrf: csrfFrom(page.text) };
    }
    /** The page minus the answer and the echoed receipt: what is left must not depend on the receipt. */
    const rest = (html: string) =>
      html.replace(/<p class="notice [^"]*receipt-outcome"[^>]*>[^<]*<\/p>/, '').replace(/name="receipt" class="([^"]*)" value="[^"]*"/, 'name="receipt" class="$1"');

    it('says only "counted" or "not found", and no-store', async () => {
      const { f, receipts } = await decided([[0], [2]]);
      const { agent, csrf } = await withCsrf(f.id);
      const check = (receipt: string) => agent.post(`/results/${f.id}/receipt`).type('form').send(formBody({ _csrf: csrf, receipt }));
      const found = await check(receipts[0]!).expect(200);
      expect(found.headers['cache-control']).toBe('no-store');
      expect(found.text).toContain('This receipt is among the ballots counted.');
      // Case and a hyphen make no difference (Crockford base32 decoding).
      const typedLoosely = `${receipts[1]!.slice(0, 5).toLowerCase()}-${receipts[1]!.slice(5)}`;
      expect((await check(typedLoosely).expect(200)).text).toContain('This receipt is among the ballots counted.');
      let other = generateReceipt(ctx.random);
      while (receipts.includes(other)) other = generateReceipt(ctx.random);
      const missing = await check(other).expect(200);
      expect(missing.text).toContain('This receipt was not found. Check it for typing mistakes and try again.');
      expect(missing.text).not.toContain('This receipt is among the ballots counted');
      expect(rest(found.text)).toBe(rest(missing.text));
      expect(rest(found.text)).not.toContain(receipts[0]!);
      const malformed = await check('12345').expect(400);
      expect(malformed.text).toContain('That is not a receipt.');
      expect(malformed.text).toContain('aria-invalid="true"');
      expect(malformed.text).toContain('value="12345"');
    });

    it('is refused before publication (409)', async () => {
      const f = await openElectionFixture(ctx, organiserId);
      const [receipt] = await castAll(ctx, f, [[1]]);
      const agent = request.agent(app);
      // The pending page has no receipt form, so take this session's token from a page that has a form.
      const token = csrfFrom((await agent.get(`/vote/${f.id}`).expect(200)).text);
      const res = await agent.post(`/results/${f.id}/receipt`).type('form').send(formBody({ _csrf: token, receipt: receipt! })).expect(409);
      expect(res.text).toContain('Receipts can be checked here once the result is published.');
      expect(res.text).not.toContain('This receipt is among the ballots counted');
    });

    it('refuses a missing or invalid CSRF token (403)', async () => {
      const { f, receipts } = await decided([[0]]);
      const { agent, csrf } = await withCsrf(f.id);
      await agent.post(`/results/${f.id}/receipt`).type('form').send(formBody({ receipt: receipts[0]! })).expect(403);
      await agent.post(`/results/${f.id}/receipt`).type('form').send(formBody({ _csrf: `${csrf}x`, receipt: receipts[0]! })).expect(403);
    });
  });

  describe('no page shows a count per option', () => {
    // Distinctive approval counts (two-digit, far from ε, seats, d, the bounds' margins and the dates on
    // these pages), so a count printed anywhere would show up as a digit run of its own.
    const COUNTS = [43, 37, 52, 34];
    const TURNOUT = 61;
    const ballots = Array.from({ length: TURNOUT }, (_, i) => COUNTS.flatMap((c, j) => (i < c ? [j] : [])));

    /** Every maximal run of digits in the page, ignoring the election id and the CSRF token (random, unavoidable). */
    function digitRuns(html: string, electionId: string): Set<number> {
      const cleaned = html.split(electionId).join(' ').replace(/name="_csrf" value="[^"]*"/g, ' ');
      return new Set([...cleaned.matchAll(/\d+/g)].map((m) => Number(m[0])));
    }

    it('holds for every member-facing page of a decided election, and the check catches a number that is shown', async () => {
      expect(ballots.map((b) => b.length).reduce((a, b) => a + b)).toBe(COUNTS.reduce((a, b) => a + b));
      const f = await openElectionFixture(ctx, organiserId, { codes: TURNOUT, epsilon: '1' });
      const receipts = await castAll(ctx, f, ballots);
      const pages: string[] = [];
      const agent = request.agent(app);
      clock.advance(8 * DAY);
      pages.push((await agent.get(`/vote/${f.id}`).expect(409)).text);
      pages.push((await agent.get(`/results/${f.id}`).expect(200)).text);
      await tallyFixture(ctx, f, false);
      pages.push((await agent.get(`/results/${f.id}`).expect(200)).text);
      await publishResult(ctx, { electionId: f.id, organiserId });
      const published = (await agent.get(`/results/${f.id}`).expect(200)).text;
      pages.push(published);
      const csrf = csrfFrom(published);
      pages.push((await agent.post(`/results/${f.id}/receipt`).type('form').send(formBody({ _csrf: csrf, receipt: receipts[5]! })).expect(200)).text);
      pages.push((await agent.post(`/vote/${f.id}/ballot`).type('form').send(formBody({ _csrf: csrf, code: f.codes[0]! })).expect(409)).text);

      for (const html of pages) {
        const runs = digitRuns(html, f.id);
        expect(runs.size).toBeGreaterThan(3); // dates, ε and the like are there: the scan is not looking at nothing
        for (const c of COUNTS) expect(runs.has(c), `count ${c} appears`).toBe(false);
        expect(runs.has(TURNOUT), 'unpublished turnout appears').toBe(false);
      }

      // Control: the same ballots with turnout published. The page now shows 61, and the same scan finds it.
      clock.set(START);
      const g = await openElectionFixture(ctx, organiserId, { codes: TURNOUT, epsilon: '1', publishTurnout: true });
      await castAll(ctx, g, ballots);
      clock.advance(8 * DAY);
      await tallyFixture(ctx, g, true);
      const shown = (await request(app).get(`/results/${g.id}`).expect(200)).text;
      expect(digitRuns(shown, g.id).has(TURNOUT)).toBe(true);
      for (const c of COUNTS) expect(digitRuns(shown, g.id).has(c)).toBe(false);
    });
  });
});
