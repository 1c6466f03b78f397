import { describe, expect, it } from 'vitest';
import request from 'supertest';
import { publishResult } from '../../../src/elections/publishResult.ts';
import { engines } from '../../helpers/databases.ts';
import { castAll, csrfFrom, formBody, openElectionFixture, tallyFixture } from '../../helpers/fixtures.ts';
import { useMemberSuite, SUITE_START, DAY } from '../../helpers/memberSuite.ts';

/** Cast ballots with known, distinctive approval counts and scan every member-facing page for them. */
describe.each(engines)('no page shows a count per option [%s]', (engine) => {
  const s = useMemberSuite(engine);

  // Distinctive approval counts (two-digit, far from ε, seats, d, the bounds' margins and the dates on
  // these pages), so a count printed anywhere would show up as a digit run of its own.
  const COUNTS = [43, 37, 52, 34];
  const TURNOUT = 61;
  const ballots = Array.from({ length: TURNOUT }, (_, i) => COUNTS.flatMap((c, j) => (i < c ? [j] : [])));

  /**
   * Every maximal run of digits in the page, ignoring what is random and unavoidable: the election id,
   * the CSRF token, and the receipt the member typed, echoed back into its field.
   */
  function digitRuns(html: string, electionId: string): Set<number> {
    const cleaned = html
      .split(electionId)
      .join(' ')
      .replace(/name="_csrf" value="[^"]*"/g, ' ')
      .replace(/name="receipt" class="[^"]*" value="[^"]*"/g, ' ')
      // The signing key's id (16 hex digits, also in the key's address) and fingerprint (groups of four):
      // random hex, whose digit runs would match a count by chance.
      .replace(/(?:[0-9a-f]{4} ){7,}[0-9a-f]{4}/g, ' ')
      .replace(/[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}/g, ' ') // random ids, such as the member group's in the ledger link
      .replace(/[0-9a-f]{16,}/g, ' ')
      // The margin chart and its table: drawing coordinates and data-free bounds, computed from ε, options and
      // seats only ("the chart follows from the settings alone" in results.test.ts renders it identically for
      // different ballots), so their digits could only collide with a count by chance.
      .replace(/<figure class="chart">[\s\S]*?<\/figure>/g, ' ')
      .replace(/<details class="chart-table">[\s\S]*?<\/details>/g, ' ');
    return new Set([...cleaned.matchAll(/\d+/g)].map((m) => Number(m[0])));
  }

  it('holds for every member-facing page of a decided election, and the check catches a number that is shown', async () => {
    expect(ballots.map((b) => b.length).reduce((a, b) => a + b)).toBe(COUNTS.reduce((a, b) => a + b));
    const f = await openElectionFixture(s.ctx, s.organiserId, { codes: TURNOUT, epsilon: '1' });
    const receipts = await castAll(s.ctx, f, ballots);
    const pages: string[] = [];
    const agent = request.agent(s.app);
    s.clock.advance(8 * DAY);
    pages.push((await agent.get(`/vote/${f.id}`).expect(409)).text);
    pages.push((await agent.get(`/results/${f.id}`).expect(200)).text);
    await tallyFixture(s.ctx, f, false);
    pages.push((await agent.get(`/results/${f.id}`).expect(200)).text);
    await publishResult(s.ctx, { electionId: f.id, organiserId: s.organiserId });
    const published = (await agent.get(`/results/${f.id}`).expect(200)).text;
    pages.push(published);
    const csrf = csrfFrom(published);
    const checked = (
      await agent
        .post(`/results/${f.id}/receipt`)
        .type('form')
        .send(formBody({ _csrf: csrf, receipt: receipts[5]! }))
        .expect(200)
    ).text;
    expect(checked).toContain(`name="receipt" class="code receipt-input" value="${receipts[5]}"`); // the echo digitRuns leaves out
    pages.push(checked);
    pages.push(
      (
        await agent
          .post(`/vote/${f.id}/ballot`)
          .type('form')
          .send(formBody({ _csrf: csrf, code: f.codes[0]! }))
          .expect(409)
      ).text,
    );

    for (const html of pages) {
      const runs = digitRuns(html, f.id);
      expect(runs.size).toBeGreaterThan(3); // dates, ε and the like are there: the scan is not looking at nothing
      for (const c of COUNTS) expect(runs.has(c), `count ${c} appears`).toBe(false);
      expect(runs.has(TURNOUT), 'unpublished turnout appears').toBe(false);
    }

    // Control: the same ballots with turnout published. The page now shows 61, and the same scan finds it.
    s.clock.set(SUITE_START);
    const g = await openElectionFixture(s.ctx, s.organiserId, { codes: TURNOUT, epsilon: '1', publishTurnout: true });
    await castAll(s.ctx, g, ballots);
    s.clock.advance(8 * DAY);
    await tallyFixture(s.ctx, g, true);
    const shown = (await request(s.app).get(`/results/${g.id}`).expect(200)).text;
    expect(digitRuns(shown, g.id).has(TURNOUT)).toBe(true);
    for (const c of COUNTS) expect(digitRuns(shown, g.id).has(c)).toBe(false);
  });
});
