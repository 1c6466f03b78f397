import { describe, expect, it } from 'vitest';
import request from 'supertest';
import { engines } from '../../helpers/databases.ts';
import { DAY, useMemberSuite } from '../../helpers/memberSuite.ts';
import { FIXTURE_PASSWORD, csrfFrom, openElectionFixture } from '../../helpers/fixtures.ts';
import { csrfOf, toConfirm, castFrom, receiptPage } from '../../helpers/memberWalk.ts';

const text = (html: string) =>
  html
    .replace(/<[^>]+>/g, '')
    .replace(/&#39;/g, "'")
    .replace(/&#34;/g, '"')
    .replace(/&amp;/g, '&')
    .replace(/\s+/g, ' ')
    .trim();

/** The page's <title> without the site's name, and its first <h1>. */
function titleAndHeading(html: string): { title: string; h1: string } {
  const title = text(/<title>([\s\S]*?)<\/title>/.exec(html)?.[1] ?? '').replace(/ · [^·]*$/, '');
  const h1 = text(/<h1\b[^>]*>([\s\S]*?)<\/h1>/.exec(html)?.[1] ?? '');
  return { title, h1 };
}

/**
 * Every page a member can meet, walked as a member would (help, checking, the code, the ballot, the receipt, an
 * election not yet open, closed, pending and published): its tab title holds its heading, and names the election.
 */
describe.each(engines)('every member page’s title names what the page shows [%s]', (engine) => {
  const s = useMemberSuite(engine);
  it('/help is an index of the help pages, each link answering 200', async () => {
    const res = await request(s.app).get('/help');
    expect(res.status).toBe(200);
    const links = [...res.text.matchAll(/<a href="(\/[^"]*)"[^>]*>([^<]+)<\/a>/g)].filter((m) => /<main/.test(res.text.slice(0, m.index)));
    const hrefs = links.map((m) => m[1]);
    for (const href of ['/help/how-the-result-is-drawn', '/help/choosing-epsilon', '/verify', '/keys']) expect(hrefs).toContain(href);
    for (const href of hrefs) expect((await request(s.app).get(href!)).status, href).toBe(200);
  });

  async function organiser() {
    const agent = request.agent(s.app);
    const token = csrfFrom((await agent.get('/organise/sign-in').expect(200)).text);
    await agent
      .post('/organise/sign-in')
      .type('form')
      .send({ _csrf: token, email: 'organiser@rowing.example', password: FIXTURE_PASSWORD })
      .expect(303);
    return agent;
  }

  it('an organiser back on the publish page of a published result is taken to the election, not told it cannot be done', async () => {
    const d = await s.decided([[0], [1]], { title: 'Naming the club tender' });
    const agent = await organiser();
    const again = await agent.get(`/organise/elections/${d.f.id}/publish`);
    expect(again.status).toBe(303);
    expect(again.headers.location).toBe(`/organise/elections/${d.f.id}`);
    const dashboard = titleAndHeading((await agent.get(`/organise/elections/${d.f.id}`).expect(200)).text);
    expect(dashboard.title).toContain('Naming the club tender');
    expect(dashboard.title).not.toContain('cannot be done');
  });

  it('the link to the organisers’ area and the list of organiser accounts have different names', async () => {
    const home = (await request(s.app).get('/').expect(200)).text;
    const areaLink = text(/<a href="\/organise\/sign-in">([\s\S]*?)<\/a>/.exec(home)?.[1] ?? '');
    const agent = await organiser();
    const list = (await agent.get('/organise').expect(200)).text;
    const listLink = text(/<a [^>]*href="\/organise\/organisers">([\s\S]*?)<\/a>/.exec(list)?.[1] ?? '');
    const accounts = titleAndHeading((await agent.get('/organise/organisers').expect(200)).text);
    expect(areaLink).not.toBe('');
    expect(listLink).toBe(accounts.h1);
    expect(accounts.title).toContain(accounts.h1);
    expect(areaLink.toLowerCase()).not.toBe(accounts.h1.toLowerCase());
    // Neither is the bare plural, which reads as either.
    expect([areaLink, accounts.h1]).not.toContain('Organisers');
  });

  it('walks them: the <title> holds the <h1>, and the election’s name on its pages', async () => {
    const pages: { what: string; html: string }[] = [];
    const see = (what: string, html: string) => pages.push({ what, html });
    const get = async (path: string) => (await request(s.app).get(path)).text;
    see('home', await get('/'));
    see('help', await get('/help'));
    see('how drawn', await get('/help/how-the-result-is-drawn'));
    see('epsilon', await get('/help/choosing-epsilon'));
    see('verify', await get('/verify'));
    see('keys', await get('/keys'));
    see('missing', await get('/no-such-page'));
    const soon = await openElectionFixture(s.ctx, s.organiserId, {
      title: 'Naming the new boat',
      opensAt: new Date(Date.parse('2026-06-03T09:00:00Z')),
      codes: 1,
    });
    see('not yet open', await get(`/vote/${soon.id}`));
    const f = await openElectionFixture(s.ctx, s.organiserId, { title: 'Naming the old boat', codes: 3 });
    const m = s.browser();
    see('code entry', (await m.get(`/vote/${f.id}`)).text);
    const malformed = await m.post(`/vote/${f.id}/ballot`, [
      ['_csrf', csrfOf((await m.get(`/vote/${f.id}`)).text)],
      ['code', 'ABC'],
    ]);
    see('malformed code', malformed.text);
    const confirm = await toConfirm(m, f.id, f.codes[0]!, [0]);
    see('read-back', confirm.text);
    await castFrom(m, f.id, confirm.text);
    see('receipt', (await receiptPage(m, f.id)).page.text);
    see('already cast', (await m.get(`/vote/${f.id}`)).text);
    s.clock.advance(8 * DAY);
    see('closed', await get(`/vote/${f.id}`));
    see('result pending', await get(`/results/${f.id}`));
    const d = await s.decided([[0], [1]], { title: 'Naming the rescue launch' });
    see('published, from the ballot link', await get(`/vote/${d.f.id}`));
    see('result published', await get(`/results/${d.f.id}`));
    see('minutes', await get(`/results/${d.f.id}/minutes`));
    const elections = ['Naming the new boat', 'Naming the old boat', 'Naming the rescue launch'];
    const wrong: string[] = [];
    for (const p of pages) {
      const { title, h1 } = titleAndHeading(p.html);
      expect(h1, `${p.what} has a heading`).not.toBe('');
      // The tab says what the heading says: a published result is never titled as a refusal.
      if (!title.toLowerCase().includes(h1.toLowerCase())) wrong.push(`${p.what}: title "${title}", heading "${h1}"`);
      // A page about one election names it in the tab, so several open tabs can be told apart.
      const about = elections.find((e) => p.html.includes(`<h1>${e}</h1>`) || p.html.includes(`${e}:`));
      if (about && !title.includes(about)) wrong.push(`${p.what}: title "${title}" does not name ${about}`);
    }
    expect(wrong).toEqual([]);
    // The 27-symbol format of earlier versions is gone: no page mentions it (the code hint, the malformed-code advice).
    for (const p of pages) expect(p.html, p.what).not.toMatch(/older slips|\b27 on\b|have 27\b/);
    expect(pages).toHaveLength(18);
  });
});
