import { describe, expect, it } from 'vitest';
import request from 'supertest';
import { countTurnout } from '../../../src/elections/turnout.ts';
import { checkReceipt } from '../../../src/elections/checkReceipt.ts';
import { engines } from '../../helpers/databases.ts';
import { openElectionFixture, openStoredBallots } from '../../helpers/fixtures.ts';
import { useMemberSuite } from '../../helpers/memberSuite.ts';

/** The member's three steps and the receipt: what each page shows, what is sealed, and where the code may travel. */
describe.each(engines)('member voting pages [%s]', (engine) => {
  const s = useMemberSuite(engine);
  const { begin, post } = s;

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

  it('casts a ballot through code → ballot → confirm → receipt, sealing exactly the ticked options', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
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

    const posted = await post(agent, `/vote/${f.id}/cast`, { _csrf: csrf, code: typed, approve: ['0', '2'] }).expect(303);
    expect(posted.headers.location).toBe(`/vote/${f.id}/receipt`);
    const cast = await agent.get(posted.headers.location!).expect(200);
    expect(cast.headers['cache-control']).toBe('no-store');
    expect(cast.text).toContain('Your ballot has been received');
    expect(cast.text).toContain('Keep this receipt');
    const receipt = /<p class="receipt">([0-9A-Z]{5}-[0-9A-Z]{5})<\/p>/.exec(cast.text)?.[1];
    expect(receipt).toBeDefined();
    expect(cast.text).not.toContain(typed);
    expect(await checkReceipt(s.ctx, { electionId: f.id, receipt: receipt! })).toBe(true);
    expect(await openStoredBallots(s.ctx, f.id)).toEqual([[0, 2]]);
    expect((await countTurnout(s.ctx.knex, f.id)).ballotsCast).toBe(1);
  });

  it('treats an empty ballot as an abstention and says so before casting', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const { agent, csrf } = await begin(f);
    const code = f.codes[1]!;
    await post(agent, `/vote/${f.id}/ballot`, { _csrf: csrf, code }).expect(200);
    const confirm = await post(agent, `/vote/${f.id}/confirm`, { _csrf: csrf, code }).expect(200);
    expect(confirm.text).toContain('You have not ticked any option');
    expect(confirm.text).toContain('abstention');
    expect(confirm.text).toContain('Cast my empty ballot');
    await post(agent, `/vote/${f.id}/cast`, { _csrf: csrf, code }).expect(303);
    expect(await openStoredBallots(s.ctx, f.id)).toEqual([[]]);
  });

  it('"change my choices" returns to the ballot with the ticks kept', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const { agent, csrf } = await begin(f);
    const code = f.codes[0]!;
    const res = await post(agent, `/vote/${f.id}/ballot`, { _csrf: csrf, code, approve: ['1', '3'], changing: 'yes' }).expect(200);
    const checked = [...res.text.matchAll(/value="(\d+)"\s*(?:aria-describedby="[^"]*")?\s*checked>/g)].map((m) => m[1]);
    expect(checked).toEqual(['1', '3']);
  });

  it('never puts the code in a URL or the session', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
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
    await post(agent, `/vote/${f.id}/cast`, { _csrf: csrf, code, approve: '1' }).expect(303);
    const sessions = await s.ctx.knex('sessions').select('data');
    const stored = JSON.stringify(sessions);
    // Members' forms use a signed double-submit token, so voting writes no session row at all.
    expect(sessions.length).toBe(0);
    expect(stored).not.toContain(code);
    expect(stored).not.toContain(code.replace(/-/g, ''));
  });

  it('a plain GET of a later step goes back to the start', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const res = await request(s.app).get(`/vote/${f.id}/cast`).expect(303);
    expect(res.headers.location).toBe(`/vote/${f.id}`);
  });

  it('option labels and descriptions are escaped, never markup', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId, {
      options: [{ label: '<script>alert(1)</script>', description: '"><img src=x onerror=alert(1)>' }, { label: '"><img src=x onerror=alert(1)>' }],
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
