import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import request from 'supertest';
import type { Express } from 'express';
import { generateCode } from '../../../src/custody/index.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { revokeCode } from '../../../src/elections/revokeCode.ts';
import { countTurnout } from '../../../src/elections/turnout.ts';
import { checkReceipt } from '../../../src/elections/checkReceipt.ts';
import { testApp } from '../../helpers/app.ts';
import { testClock, testContext } from '../../helpers/context.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import {
  createDraft,
  createOrganiser,
  csrfFrom,
  formBody,
  openElectionFixture,
  openStoredBallots,
  type ElectionFixture,
} from '../../helpers/fixtures.ts';

const START = '2026-06-01T09:00:00Z';
const DAY = 24 * 3600_000;
type Agent = ReturnType<typeof request.agent>;

/** Changes the check symbol (the 27th) to another valid one: exactly the slip the check exists to catch. */
function withWrongCheck(code: string): string {
  const last = code.slice(-1);
  return code.slice(0, -1) + (last === '0' ? '1' : '0');
}

describe.each(engines)('member voting pages [%s]', (engine) => {
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

  async function begin(f: ElectionFixture): Promise<{ agent: Agent; csrf: string; html: string }> {
    const agent = request.agent(app);
    const res = await agent.get(`/vote/${f.id}`).expect(200);
    return { agent, csrf: csrfFrom(res.text), html: res.text };
  }
  const post = (agent: Agent, path: string, fields: Record<string, string | string[] | undefined>) =>
    agent.post(path).type('form').send(formBody(fields));

  it('shows the code entry page with ε, the caution and no-store', async () => {
    const f = await openElectionFixture(ctx, organiserId, { epsilon: '0.75' });
    const res = await request(app).get(`/vote/${f.id}`).expect(200);
    expect(res.headers['cache-control']).toBe('no-store');
    expect(res.text).toContain('Name the new coxed four');
    expect(res.text).toContain('ε = 0.75');
    expect(res.text).toContain('drawn at random, weighted toward the most approved options');
    expect(res.text).toContain('Your organisation adopted this way of choosing');
    expect(res.text).toMatch(/<label for="code">/);
    expect(res.text).toContain(`action="/vote/${f.id}/ballot"`);
  });

  it('casts a ballot through code → ballot → confirm → receipt, sealing exactly the ticked options', async () => {
    const f = await openElectionFixture(ctx, organiserId);
    const { agent, csrf } = await begin(f);
    // Case, spaces and look-alike letters are tolerated (Crockford base32 decoding rules).
    const typed = f.codes[0]!.toLowerCase().replace(/-/g, ' ');
    const ballot = await post(agent, `/vote/${f.id}/ballot`, { _csrf: csrf, code: typed }).expect(200);
    expect(ballot.headers['cache-control']).toBe('no-store');
    expect(ballot.text).toMatch(/<fieldset[^>]*>\s*<legend>Tick every option you find acceptable<\/legend>/);
    for (const [i, o] of f.options.entries()) {
      expect(ballot.text).toContain(`<input type="checkbox" id="option-${i}" name="approve" value="${i}"`);
      expect(ballot.text).toContain(`<label for="option-${i}">${o.label}</label>`);
      if (o.description) expect(ballot.text).toContain(o.description);
    }
    expect(ballot.text).not.toMatch(/checked>/);
    expect(ballot.text).toContain(`name="code" value="${typed}"`);

    const confirm = await post(agent, `/vote/${f.id}/confirm`, { _csrf: csrf, code: typed, approve: ['2', '0'] }).expect(200);
    expect(confirm.text).toContain('<li>Heron</li>');
    expect(confirm.text).toContain('<li>Otter</li>');
    expect(confirm.text).not.toContain('<li>Kingfisher</li>');
    expect(confirm.text).not.toContain('abstention');
    expect(confirm.text.match(/name="approve" value="0"/g)).toHaveLength(2); // cast form and change form
    expect(confirm.text.match(/name="approve" value="2"/g)).toHaveLength(2);

    const cast = await post(agent, `/vote/${f.id}/cast`, { _csrf: csrf, code: typed, approve: ['0', '2'] }).expect(200);
    expect(cast.headers['cache-control']).toBe('no-store');
    expect(cast.text).toContain('Your ballot has been received');
    expect(cast.text).toContain('Keep this receipt');
    const receipt = /<p class="receipt">([0-9A-Z]{5}-[0-9A-Z]{5})<\/p>/.exec(cast.text)?.[1];
    expect(receipt).toBeDefined();
    expect(cast.text).not.toContain(typed);
    expect(await checkReceipt(ctx, { electionId: f.id, receipt: receipt! })).toBe(true);
    expect(await openStoredBallots(ctx, f.id)).toEqual([[0, 2]]);
    expect((await countTurnout(ctx.knex, f.id)).ballotsCast).toBe(1);
  });

  it('treats an empty ballot as an abstention and says so before casting', async () => {
    const f = await openElectionFixture(ctx, organiserId);
    const { agent, csrf } = await begin(f);
    const code = f.codes[1]!;
    await post(agent, `/vote/${f.id}/ballot`, { _csrf: csrf, code }).expect(200);
    const confirm = await post(agent, `/vote/${f.id}/confirm`, { _csrf: csrf, code }).expect(200);
    expect(confirm.text).toContain('You have not ticked any option');
    expect(confirm.text).toContain('abstention');
    expect(confirm.text).toContain('Cast my empty ballot');
    await post(agent, `/vote/${f.id}/cast`, { _csrf: csrf, code }).expect(200);
    expect(await openStoredBallots(ctx, f.id)).toEqual([[]]);
  });

  it('"change my choices" returns to the ballot with the ticks kept', async () => {
    const f = await openElectionFixture(ctx, organiserId);
    const { agent, csrf } = await begin(f);
    const code = f.codes[0]!;
    const res = await post(agent, `/vote/${f.id}/ballot`, { _csrf: csrf, code, approve: ['1', '3'], changing: 'yes' }).expect(200);
    const checked = [...res.text.matchAll(/value="(\d+)"\s*(?:aria-describedby="[^"]*")?\s*checked>/g)].map((m) => m[1]);
    expect(checked).toEqual(['1', '3']);
  });

  it('a typing slip in the code re-renders the code form with the input kept (400)', async () => {
    const f = await openElectionFixture(ctx, organiserId);
    const { agent, csrf } = await begin(f);
    const typo = withWrongCheck(f.codes[0]!);
    const res = await post(agent, `/vote/${f.id}/ballot`, { _csrf: csrf, code: typo }).expect(400);
    expect(res.text).toContain('Check your ballot code for a typing mistake');
    expect(res.text).toContain(`value="${typo}"`);
    expect(res.text).toContain('aria-invalid="true"');
    expect(res.text).toContain('role="alert"');
    expect(res.headers['cache-control']).toBe('no-store');
  });

  it('a code of the wrong shape is malformed (400), kept in the form', async () => {
    const f = await openElectionFixture(ctx, organiserId);
    const { agent, csrf } = await begin(f);
    const res = await post(agent, `/vote/${f.id}/ballot`, { _csrf: csrf, code: 'oak-tree' }).expect(400);
    expect(res.text).toContain('That does not look like a ballot code');
    expect(res.text).toContain('value="oak-tree"');
  });

  it('an unknown code (well-formed, not issued here) gets its own page (404) with the input kept', async () => {
    const f = await openElectionFixture(ctx, organiserId);
    const other = await openElectionFixture(ctx, organiserId);
    const { agent, csrf } = await begin(f);
    for (const code of [generateCode(ctx.random).display, other.codes[0]!]) {
      const res = await post(agent, `/vote/${f.id}/ballot`, { _csrf: csrf, code }).expect(404);
      expect(res.text).toContain('We do not recognise that ballot code');
      expect(res.text).toContain(`value="${code}"`);
    }
  });

  it('a spent code is refused at the first step (409)', async () => {
    const f = await openElectionFixture(ctx, organiserId);
    const { agent, csrf } = await begin(f);
    const code = f.codes[0]!;
    await post(agent, `/vote/${f.id}/cast`, { _csrf: csrf, code, approve: '1' }).expect(200);
    const res = await post(agent, `/vote/${f.id}/ballot`, { _csrf: csrf, code }).expect(409);
    expect(res.text).toContain('This ballot code has already been used');
  });

  it('a resubmission (refresh of the receipt, or back to the confirmation) finds the code used and counts nothing twice', async () => {
    const f = await openElectionFixture(ctx, organiserId);
    const { agent, csrf } = await begin(f);
    const code = f.codes[0]!;
    const fields = { _csrf: csrf, code, approve: ['0'] };
    await post(agent, `/vote/${f.id}/cast`, fields).expect(200);
    const again = await post(agent, `/vote/${f.id}/cast`, fields).expect(409);
    expect(again.text).toContain('Your code has already been used');
    expect(again.text).toContain('If you pressed Back or Refresh after casting your ballot, this is expected');
    const back = await post(agent, `/vote/${f.id}/confirm`, fields).expect(409);
    expect(back.text).toContain('Back or Refresh');
    expect((await countTurnout(ctx.knex, f.id)).ballotsCast).toBe(1);
  });

  it('a revoked code is refused (410), at the first step and at casting', async () => {
    const f = await openElectionFixture(ctx, organiserId);
    const { agent, csrf } = await begin(f);
    const code = f.codes[2]!;
    await post(agent, `/vote/${f.id}/ballot`, { _csrf: csrf, code }).expect(200);
    await revokeCode(ctx, { electionId: f.id, organiserId, code });
    const first = await post(agent, `/vote/${f.id}/ballot`, { _csrf: csrf, code }).expect(410);
    expect(first.text).toContain('This ballot code has been withdrawn');
    const cast = await post(agent, `/vote/${f.id}/cast`, { _csrf: csrf, code, approve: '0' }).expect(410);
    expect(cast.text).toContain('Your ballot was not counted');
    expect((await countTurnout(ctx.knex, f.id)).ballotsCast).toBe(0);
  });

  it('before the opening time the page says voting has not started (409)', async () => {
    const opensAt = new Date(Date.parse(START) + DAY);
    const f = await openElectionFixture(ctx, organiserId, { opensAt, closesAt: new Date(opensAt.getTime() + DAY) });
    const res = await request(app).get(`/vote/${f.id}`).expect(409);
    expect(res.text).toContain('Voting has not started yet');
    expect(res.text).toContain(`datetime="${opensAt.toISOString()}"`);
    clock.set(opensAt);
    const { agent, csrf } = await begin(f);
    clock.set(new Date(opensAt.getTime() - 1000)); // a code check a second early is refused too
    const early = await post(agent, `/vote/${f.id}/ballot`, { _csrf: csrf, code: f.codes[0]! }).expect(409);
    expect(early.text).toContain('Voting has not started yet');
  });

  it('after the closing time the page says voting has closed (409) and links to the result', async () => {
    const f = await openElectionFixture(ctx, organiserId);
    clock.advance(8 * DAY);
    const res = await request(app).get(`/vote/${f.id}`).expect(409);
    expect(res.text).toContain('Voting has closed');
    expect(res.text).toContain(`href="/results/${f.id}"`);
  });

  it('when voting closes between steps, the member is told clearly the ballot was not counted', async () => {
    const f = await openElectionFixture(ctx, organiserId);
    const { agent, csrf } = await begin(f);
    const code = f.codes[0]!;
    await post(agent, `/vote/${f.id}/ballot`, { _csrf: csrf, code }).expect(200);
    clock.advance(7 * DAY); // exactly the closing instant: closed (acceptsBallotsAt is now < closesAt)
    for (const step of ['confirm', 'cast']) {
      const res = await post(agent, `/vote/${f.id}/${step}`, { _csrf: csrf, code, approve: ['1'] }).expect(409);
      expect(res.text).toContain('Voting has closed');
      expect(res.text).toContain('Your ballot was not counted');
    }
    expect((await countTurnout(ctx.knex, f.id)).ballotsCast).toBe(0);
  });

  it('a ballot that names positions the election does not have is refused (422), nothing cast', async () => {
    const f = await openElectionFixture(ctx, organiserId);
    const { agent, csrf } = await begin(f);
    const code = f.codes[0]!;
    for (const approve of [['4'], ['1', '1'], ['-1'], ['one'], ['01']]) {
      const res = await post(agent, `/vote/${f.id}/cast`, { _csrf: csrf, code, approve }).expect(422);
      expect(res.text).toContain('That ballot could not be read');
    }
    expect((await countTurnout(ctx.knex, f.id)).ballotsCast).toBe(0);
  });

  it('unknown, malformed and draft election ids are 404 (drafts are not shown to members)', async () => {
    const draft = await createDraft(ctx, organiserId);
    for (const id of ['00000000-0000-4000-8000-000000000000', 'not-an-id', draft.id]) {
      const res = await request(app).get(`/vote/${id}`).expect(404);
      expect(res.text).toContain('We could not find that election.');
    }
    const { csrf, agent } = await begin(await openElectionFixture(ctx, organiserId));
    await post(agent, `/vote/${draft.id}/ballot`, { _csrf: csrf, code: draft.codes[0]! }).expect(404);
    await post(agent, `/vote/${draft.id}/cast`, { _csrf: csrf, code: draft.codes[0]!, approve: '0' }).expect(404);
  });

  it('refuses every POST without a valid CSRF token (403) and casts nothing', async () => {
    const f = await openElectionFixture(ctx, organiserId);
    const { agent, csrf } = await begin(f);
    const code = f.codes[0]!;
    for (const step of ['ballot', 'confirm', 'cast']) {
      await post(agent, `/vote/${f.id}/${step}`, { code, approve: '0' }).expect(403);
      await post(agent, `/vote/${f.id}/${step}`, { _csrf: csrf.replace(/^./, (c) => (c === 'a' ? 'b' : 'a')), code, approve: '0' }).expect(403);
      // A token from another session is no good either.
      const { csrf: foreign } = await begin(f);
      await post(agent, `/vote/${f.id}/${step}`, { _csrf: foreign, code, approve: '0' }).expect(403);
    }
    expect((await countTurnout(ctx.knex, f.id)).ballotsCast).toBe(0);
  });

  it('never puts the code in a URL or the session', async () => {
    const f = await openElectionFixture(ctx, organiserId);
    const { agent, csrf } = await begin(f);
    const code = f.codes[0]!;
    const pages = [
      await post(agent, `/vote/${f.id}/ballot`, { _csrf: csrf, code }),
      await post(agent, `/vote/${f.id}/confirm`, { _csrf: csrf, code, approve: '1' }),
    ];
    for (const page of pages) {
      for (const m of page.text.matchAll(/(?:href|action)="([^"]*)"/g)) expect(m[1]).not.toContain(code);
      expect(page.headers.location).toBeUndefined();
    }
    await post(agent, `/vote/${f.id}/cast`, { _csrf: csrf, code, approve: '1' }).expect(200);
    const sessions = await ctx.knex('sessions').select('data');
    const stored = JSON.stringify(sessions);
    expect(sessions.length).toBeGreaterThan(0);
    expect(stored).not.toContain(code);
    expect(stored).not.toContain(code.replace(/-/g, ''));
  });

  it('a plain GET of a later step goes back to the start', async () => {
    const f = await openElectionFixture(ctx, organiserId);
    const res = await request(app).get(`/vote/${f.id}/cast`).expect(303);
    expect(res.headers.location).toBe(`/vote/${f.id}`);
  });

  it('option labels and descriptions are escaped, never markup', async () => {
    const f = await openElectionFixture(ctx, organiserId, {
      options: [
        { label: '<script>alert(1)</script>', description: '"><img src=x onerror=alert(1)>' },
        { label: '"><img src=x onerror=alert(1)>' },
      ],
    });
    const { agent, csrf } = await begin(f);
    const code = f.codes[0]!;
    const pages = [
      (await post(agent, `/vote/${f.id}/ballot`, { _csrf: csrf, code })).text,
      (await post(agent, `/vote/${f.id}/confirm`, { _csrf: csrf, code, approve: ['0', '1'] })).text,
    ];
    for (const html of pages) {
      expect(html).not.toContain('<script>alert(1)</script>');
      expect(html).not.toContain('<img src=x');
      expect(html).toContain('&lt;script&gt;alert(1)&lt;/script&gt;');
    }
  });
});
