import { describe, expect, it } from 'vitest';
import request from 'supertest';
import { countTurnout } from '../../../src/elections/turnout.ts';
import { testApp } from '../../helpers/app.ts';
import { engines } from '../../helpers/databases.ts';
import { openElectionFixture, openStoredBallots } from '../../helpers/fixtures.ts';
import { agentMember, useMemberSuite } from '../../helpers/memberSuite.ts';
import { castFrom, hiddenFields, receiptPage, sendCode, sendTicks, toBallot, toConfirm, voteThrough, type Answer } from '../../helpers/memberWalk.ts';

/**
 * The step cookie that carries a member between the voting steps (src/web/routes/vote/stepCookie.ts):
 * what it is (HttpOnly, SameSite=Lax, scoped to the ballot's path, sealed so the code never shows),
 * what it refuses (a changed value, another election's, an expired one), and what it keeps (the same
 * cast token across reloads of the read-back, so a cast sent again returns the same receipt).
 */
describe.each(engines)('the member step cookie [%s]', (engine) => {
  const s = useMemberSuite(engine);

  const stepCookies = (answers: Answer[]) => answers.flatMap((a) => a.setCookies).filter((c) => /^(__Secure-)?vt-vote=/.test(c));

  it('is HttpOnly, SameSite=Lax, scoped to /vote/<id>, short-lived, and never holds the code in clear', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const m = s.browser();
    const code = f.codes[0]!;
    const typed = code.toLowerCase().replace(/-/g, ' ');
    const answers = [await sendCode(m, f.id, typed)];
    answers.push(await m.get(`/vote/${f.id}/ballot`));
    answers.push(await sendTicks(m, f.id, answers[1]!.text, [0, 2]));
    answers.push(await m.get(`/vote/${f.id}/confirm`));
    answers.push(await castFrom(m, f.id, answers[3]!.text));
    const cookies = stepCookies(answers);
    expect(cookies).toHaveLength(3); // code step, ticks, cast
    for (const c of cookies) {
      expect(c).toMatch(/; HttpOnly/i);
      expect(c).toMatch(/; SameSite=Lax/i);
      expect(c).toContain(`; Path=/vote/${f.id};`);
      expect(Number(/Max-Age=(\d+)/.exec(c)?.[1])).toBeLessThanOrEqual(30 * 60);
      expect(c).not.toMatch(/; Secure/i); // plain http here; https below
      const value = decodeURIComponent(c.split(';')[0]!.slice('vt-vote='.length));
      for (const form of [code, code.replace(/-/g, ''), typed, typed.replace(/ /g, ''), code.toLowerCase().replace(/-/g, '')]) {
        expect(c.toLowerCase()).not.toContain(form.toLowerCase());
        expect(Buffer.from(value, 'base64url').toString('latin1').toLowerCase()).not.toContain(form.toLowerCase());
      }
      expect(value).toMatch(/^[A-Za-z0-9_-]+$/);
    }
    // The GETs set nothing: a reload changes no state.
    expect(answers[1]!.setCookies.filter((c) => c.startsWith('vt-vote='))).toEqual([]);
    expect(answers[3]!.setCookies.filter((c) => c.startsWith('vt-vote='))).toEqual([]);
  });

  it('on an https site it is Secure and named __Secure-', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const app = testApp(s.ctx, { PUBLIC_URL: 'https://vote.rowing.example', TRUST_PROXY: 'loopback' });
    const m = agentMember(request.agent(app));
    const start = await m.agent.get(`/vote/${f.id}`).set('X-Forwarded-Proto', 'https').expect(200);
    const res = await m.agent
      .post(`/vote/${f.id}/ballot`)
      .set('X-Forwarded-Proto', 'https')
      .set('Origin', 'https://vote.rowing.example')
      .set('Cookie', (start.headers['set-cookie'] as unknown as string[]).map((c) => c.split(';')[0]).join('; '))
      .type('form')
      .send({ _csrf: /name="_csrf" value="([^"]+)"/.exec(start.text)![1], code: f.codes[0]! });
    expect(res.status).toBe(303);
    const cookie = (res.headers['set-cookie'] as unknown as string[]).find((c) => c.startsWith('__Secure-vt-vote='));
    expect(cookie).toMatch(/; Secure/i);
    expect(cookie).toContain(`Path=/vote/${f.id}`);
  });

  it('refuses a changed value, another election’s cookie and an expired one: back to the code page', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const g = await openElectionFixture(s.ctx, s.organiserId);
    const m = s.browser();
    await toConfirm(m, f.id, f.codes[0]!, [1]);
    const value = /vt-vote=([^;]+)/.exec(m.jar.header())![1]!;
    const csrfCookie = /veiltally-csrf=([^;]+)/.exec(m.jar.header())![0];
    const get = (id: string, v: string) => request(s.app).get(`/vote/${id}/confirm`).set('Cookie', `vt-vote=${v}; ${csrfCookie}`);
    // Control: the cookie as sent opens the read-back.
    expect((await get(f.id, value)).status).toBe(200);
    const flipped = [10, Math.floor(value.length / 2), value.length - 2].map(
      (i) => value.slice(0, i) + (value[i] === 'A' ? 'B' : 'A') + value.slice(i + 1),
    );
    for (const v of [...flipped, value.slice(0, -4), `${value}AAAA`, 'not-sealed', '']) {
      const res = await get(f.id, v);
      expect([res.status, res.headers.location]).toEqual([303, `/vote/${f.id}`]);
    }
    // Another election's path: the election id is the associated data, so it does not open there.
    const other = await get(g.id, value);
    expect([other.status, other.headers.location]).toEqual([303, `/vote/${g.id}`]);
    // And its cast is refused without casting anything.
    const cast = await request(s.app)
      .post(`/vote/${g.id}/cast`)
      .set('Cookie', `vt-vote=${value}; ${csrfCookie}`)
      .type('form')
      .send({ _csrf: /name="_csrf" value="([^"]+)"/.exec((await m.get(`/vote/${f.id}/confirm`)).text)![1] });
    expect(cast.status).toBe(409);
    // Past its life (inside the sealed value, whatever the browser keeps): refused too.
    s.clock.advance(30 * 60_000 + 1000);
    expect((await get(f.id, value)).headers.location).toBe(`/vote/${f.id}`);
    expect((await countTurnout(s.ctx.knex, f.id)).ballotsCast + (await countTurnout(s.ctx.knex, g.id)).ballotsCast).toBe(0);
  });

  it('a step cookie sent to an address that names no election answers "not found", never a server error', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const m = s.browser();
    const readBack = await toConfirm(m, f.id, f.codes[0]!, [1]);
    const value = /vt-vote=([^;]+)/.exec(m.jar.header())![1]!;
    const csrfCookie = /veiltally-csrf=([^;]+)/.exec(m.jar.header())![0];
    const form = {
      _csrf: /name="_csrf" value="([^"]+)"/.exec(readBack.text)![1]!,
      ...Object.fromEntries(hiddenFields(readBack.text, '/cast').fields),
    };
    // Found by the hostile-input fuzzing: the cast read the cookie for the address as typed, and a
    // non-UUID address reached the sealing layer, which refuses it with a TypeError (500).
    for (const id of ['x', '..%2F..%2Fetc%2Fpasswd', '%F2%BD%91%97', f.id.toUpperCase().replace(/-/g, '')]) {
      const res = await request(s.app).post(`/vote/${id}/cast`).set('Cookie', `vt-vote=${value}; ${csrfCookie}`).type('form').send(form);
      expect(res.status, id).toBe(404);
    }
    expect((await countTurnout(s.ctx.knex, f.id)).ballotsCast).toBe(0);
  });

  it('keeps the same cast token across reloads of the read-back: the cast sent again gets the same receipt', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const m = s.browser();
    const first = await toConfirm(m, f.id, f.codes[0]!, [1, 2]);
    const tag = (a: Answer) => hiddenFields(a.text, '/cast').fields.find(([k]) => k === 'readBack')![1];
    const reloads = [await m.get(`/vote/${f.id}/confirm`), await m.get(`/vote/${f.id}/confirm`)];
    expect(reloads.map(tag)).toEqual([tag(first), tag(first)]);
    // The same ticks sent again from the ballot keep the token too; other ticks get a new one.
    const ballot = await m.get(`/vote/${f.id}/ballot`);
    await sendTicks(m, f.id, ballot.text, [1, 2]);
    const same = await m.get(`/vote/${f.id}/confirm`);
    expect(tag(same)).toBe(tag(first));
    // The cast's answer is lost (this browser never sees it); the member reloads the read-back and casts again.
    const lost = await request(s.app)
      .post(`/vote/${f.id}/cast`)
      .set('Cookie', m.jar.header())
      .type('form')
      .send(new URLSearchParams(hiddenFields(same.text, '/cast').fields).toString());
    expect(lost.status).toBe(303);
    const reloaded = await m.get(`/vote/${f.id}/confirm`);
    expect(reloaded.text).toContain('Read back your ballot');
    const again = await castFrom(m, f.id, reloaded.text);
    expect(again.location).toBe(`/vote/${f.id}/receipt`);
    const { receipt } = await receiptPage(m, f.id);
    expect(receipt).toMatch(/^[0-9A-Z]{5}-[0-9A-Z]{5}$/);
    // The lost answer's receipt cookie carried the same receipt.
    const lostReceipt = await request(s.app)
      .get(`/vote/${f.id}/receipt`)
      .set('Cookie', (lost.headers['set-cookie'] as unknown as string[]).map((c) => c.split(';')[0]).join('; '));
    expect(lostReceipt.text).toContain(receipt!);
    expect(await openStoredBallots(s.ctx, f.id)).toEqual([[1, 2]]);
  });

  it('a cast from a page that read back other ticks than the cookie now holds reads back again, casting nothing', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const m = s.browser();
    const oldTab = await toConfirm(m, f.id, f.codes[0]!, [0]);
    // In another tab of the same browser the member changes their ticks.
    const ballot = await m.get(`/vote/${f.id}/ballot`);
    await sendTicks(m, f.id, ballot.text, [3]);
    const res = await castFrom(m, f.id, oldTab.text);
    expect([res.status, res.location]).toEqual([303, `/vote/${f.id}/confirm`]);
    expect((await countTurnout(s.ctx.knex, f.id)).ballotsCast).toBe(0);
    const now = await m.get(`/vote/${f.id}/confirm`);
    expect(now.text).toContain(`<li>${f.options[3]!.label}</li>`);
    expect((await castFrom(m, f.id, now.text)).status).toBe(303);
    expect(await openStoredBallots(s.ctx, f.id)).toEqual([[3]]);
  });

  it('after the cast the cookie holds nothing that can cast again: a replay of it with the old form casts nothing more', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const m = s.browser();
    const { confirm, receipt } = await voteThrough(m, f.id, f.codes[0]!, [2]);
    expect(receipt).not.toBeNull();
    const form = new URLSearchParams(hiddenFields(confirm.text, '/cast').fields).toString();
    // Without the receipt cookie (another 15 minutes on), the cast state still answers with the receipt page, never a new cast.
    const cookie = m.jar.header().replace(/vt-receipt=[^;]+;?\s*/, '');
    const replay = await request(s.app).post(`/vote/${f.id}/cast`).set('Cookie', cookie).type('form').send(form);
    expect([replay.status, replay.headers.location]).toEqual([303, `/vote/${f.id}/receipt`]);
    expect((await countTurnout(s.ctx.knex, f.id)).ballotsCast).toBe(1);
    // A second browser at the receipt address sees no receipt.
    const other = await toBallot(s.browser(), f.id, f.codes[1]!);
    expect(other.text).not.toContain(receipt!);
    const gone = await request(s.app).get(`/vote/${f.id}/receipt`).expect(404);
    expect(gone.text).not.toContain(receipt!);
  });
});
