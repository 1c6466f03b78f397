import { describe, expect, it } from 'vitest';
import request from 'supertest';
import { countTurnout } from '../../../src/elections/turnout.ts';
import { checkReceipt } from '../../../src/elections/checkReceipt.ts';
import { engines } from '../../helpers/databases.ts';
import { openElectionFixture, openStoredBallots } from '../../helpers/fixtures.ts';
import { useMemberSuite } from '../../helpers/memberSuite.ts';
import { castFrom, sendCode, sendTicks, toBallot, toConfirm } from '../../helpers/memberWalk.ts';

/** The member's three steps and the receipt: what each page shows, what is sealed, and where the code may travel. */
describe.each(engines)('member voting pages [%s]', (engine) => {
  const s = useMemberSuite(engine);

  it('shows the code entry page with ε, the caution and no-store', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId, { epsilon: '0.75' });
    const res = await request(s.app).get(`/vote/${f.id}`).expect(200);
    expect(res.headers['cache-control']).toBe('no-store');
    expect(res.text).toContain('Name the new coxed four');
    expect(res.text).toContain('ε = 0.75');
    expect(res.text).toContain('drawn at random, weighted toward the most approved options');
    expect(res.text).toContain('Your organisation adopted this way of choosing');
    expect(res.text).toMatch(/<label for="code">/);
    expect(res.text).toContain(`action="/vote/${f.id}/ballot"`);
  });

  it('casts a ballot through code → ballot → confirm → receipt, each POST answered by a 303 to a GET, sealing exactly the ticked options', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const m = s.browser();
    // Case, spaces and look-alike letters are tolerated (Crockford base32 decoding rules).
    const typed = f.codes[0]!.toLowerCase().replace(/-/g, ' ');
    const sent = await sendCode(m, f.id, typed);
    expect(sent.status).toBe(303);
    expect(sent.location).toBe(`/vote/${f.id}/ballot`);
    const ballot = await m.get(`/vote/${f.id}/ballot`);
    expect(ballot.status).toBe(200);
    expect(ballot.text).toMatch(/<fieldset[^>]*>\s*<legend>Tick every option you find acceptable<\/legend>/);
    for (const [i, o] of f.options.entries()) {
      expect(ballot.text).toContain(`<input type="checkbox" id="option-${i}" name="approve" value="${i}"`);
      expect(ballot.text).toContain(`<label for="option-${i}">${o.label}</label>`);
      if (o.description) expect(ballot.text).toContain(o.description);
    }
    expect(ballot.text).not.toMatch(/checked>/);
    expect(ballot.text).not.toContain('name="code"');

    const ticks = await sendTicks(m, f.id, ballot.text, [2, 0]);
    expect([ticks.status, ticks.location]).toEqual([303, `/vote/${f.id}/confirm`]);
    const confirm = await m.get(`/vote/${f.id}/confirm`);
    expect(confirm.status).toBe(200);
    expect(confirm.text).toContain('<li>Heron</li>');
    expect(confirm.text).toContain('<li>Otter</li>');
    expect(confirm.text).not.toContain('<li>Kingfisher</li>');
    expect(confirm.text).not.toContain('abstention');
    expect(confirm.text).not.toMatch(/name="(approve|code|castToken)"/);
    expect(confirm.text).toContain(`<a class="button button-quiet" href="/vote/${f.id}/ballot">Change my choices</a>`);

    const posted = await castFrom(m, f.id, confirm.text);
    expect([posted.status, posted.location]).toEqual([303, `/vote/${f.id}/receipt`]);
    const cast = await m.agent.get(posted.location!).expect(200);
    expect(cast.headers['cache-control']).toBe('no-store');
    expect(cast.text).toContain('Your ballot has been received');
    expect(cast.text).toContain('Keep this receipt');
    // The page and "Show my receipt again" agree: this browser shows it again for 15 minutes, then nobody can.
    expect(cast.text).not.toContain('shown only once');
    expect(cast.text).toContain('This browser can show it again for 15 minutes after casting');
    const receipt = /<p class="receipt">([0-9A-Z]{5}-[0-9A-Z]{5})<\/p>/.exec(cast.text)?.[1];
    expect(receipt).toBeDefined();
    expect(cast.text).not.toContain(typed);
    expect(await checkReceipt(s.ctx, { electionId: f.id, receipt: receipt! })).toBe(true);
    expect(await openStoredBallots(s.ctx, f.id)).toEqual([[0, 2]]);
    expect((await countTurnout(s.ctx.knex, f.id)).ballotsCast).toBe(1);
  });

  it('treats an empty ballot as an abstention and says so before casting', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const m = s.browser();
    const confirm = await toConfirm(m, f.id, f.codes[1]!, []);
    expect(confirm.text).toContain('You have not ticked any option');
    expect(confirm.text).toContain('abstention');
    expect(confirm.text).toContain('Cast my empty ballot');
    expect((await castFrom(m, f.id, confirm.text)).status).toBe(303);
    expect(await openStoredBallots(s.ctx, f.id)).toEqual([[]]);
  });

  it('"change my choices" is a plain link back to the ballot with the ticks kept; new ticks are read back', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const m = s.browser();
    await toConfirm(m, f.id, f.codes[0]!, [1, 3]);
    const res = await m.get(`/vote/${f.id}/ballot`);
    expect(res.status).toBe(200);
    const checked = [...res.text.matchAll(/value="(\d+)"\s*(?:aria-describedby="[^"]*")?\s*checked>/g)].map((m) => m[1]);
    expect(checked).toEqual(['1', '3']);
    await sendTicks(m, f.id, res.text, [0]);
    const again = await m.get(`/vote/${f.id}/confirm`);
    expect(again.text).toContain('<li>Heron</li>');
    expect(again.text).not.toContain('<li>Kingfisher</li>');
    expect((await castFrom(m, f.id, again.text)).status).toBe(303);
    expect(await openStoredBallots(s.ctx, f.id)).toEqual([[0]]);
  });

  it('never puts the code in a URL, a page after the code step, or the session', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const m = s.browser();
    const code = f.codes[0]!;
    const answers = [await sendCode(m, f.id, code)];
    answers.push(await m.get(`/vote/${f.id}/ballot`));
    answers.push(await sendTicks(m, f.id, answers[1]!.text, [1]));
    answers.push(await m.get(`/vote/${f.id}/confirm`));
    answers.push(await castFrom(m, f.id, answers[3]!.text));
    answers.push(await m.get(`/vote/${f.id}/receipt`));
    answers.push(await m.get(`/vote/${f.id}/confirm`));
    for (const a of answers) {
      for (const form of [code, code.replace(/-/g, '')]) {
        expect(a.text).not.toContain(form);
        expect(a.location ?? '').not.toContain(form);
      }
    }
    const sessions = await s.ctx.knex('sessions').select('data');
    // Members' forms use a signed double-submit token, so voting writes no session row at all.
    expect(sessions.length).toBe(0);
  });

  it('a GET of a step without the step cookie goes back to the code page; a GET of the cast to the read-back', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    for (const step of ['ballot', 'confirm']) {
      const res = await request(s.app).get(`/vote/${f.id}/${step}`).expect(303);
      expect(res.headers.location).toBe(`/vote/${f.id}`);
      expect(res.headers['cache-control']).toBe('no-store');
    }
    const res = await request(s.app).get(`/vote/${f.id}/cast`).expect(303);
    expect(res.headers.location).toBe(`/vote/${f.id}/confirm`);
  });

  it('option labels and descriptions are escaped, never markup', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId, {
      options: [{ label: '<script>alert(1)</script>', description: '"><img src=x onerror=alert(1)>' }, { label: '"><img src=x onerror=alert(1)>' }],
    });
    const m = s.browser();
    const pages = [(await toBallot(m, f.id, f.codes[0]!)).text];
    await sendTicks(m, f.id, pages[0]!, [0, 1]);
    pages.push((await m.get(`/vote/${f.id}/confirm`)).text);
    for (const html of pages) {
      expect(html).not.toContain('<script>alert(1)</script>');
      expect(html).not.toContain('<img src=x');
      expect(html).toContain('&lt;script&gt;alert(1)&lt;/script&gt;');
    }
  });
});
