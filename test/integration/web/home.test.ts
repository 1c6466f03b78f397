import { describe, expect, it } from 'vitest';
import request from 'supertest';
import { engines } from '../../helpers/databases.ts';
import { castAll, createDraft, csrfFrom, openElectionFixture } from '../../helpers/fixtures.ts';
import { agentMember, useMemberSuite, SUITE_START, DAY } from '../../helpers/memberSuite.ts';
import { castFrom, sendTicks } from '../../helpers/memberWalk.ts';

/** The home page: a member can type a ballot code or paste a ballot link, and published results are listed. */
describe.each(engines)('home page for members [%s]', (engine) => {
  const s = useMemberSuite(engine);

  async function home() {
    const agent = request.agent(s.app);
    const page = await agent.get('/').expect(200);
    return { agent, csrf: csrfFrom(page.text), html: page.text };
  }

  it('finds the ballot for a code typed in lower case with spaces and hands over to its ballot page, the code in no URL or page', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId, { title: 'Name the river launch', epsilon: '0.5' });
    const other = await openElectionFixture(s.ctx, s.organiserId, { title: 'Another vote', epsilon: '0.5' });
    const { agent, csrf } = await home();
    const typed = ` ${f.codes[1]!.toLowerCase().replace(/-/g, ' ')} `;
    const res = await s.post(agent, '/ballot', { _csrf: csrf, code: typed }).expect(303);
    expect(res.headers['cache-control']).toContain('no-store');
    // The same hand-over as the ballot's own code step: a sealed step cookie for that ballot, and a GET of its ballot page.
    expect(res.headers.location).toBe(`/vote/${f.id}/ballot`);
    const cookies = res.headers['set-cookie'] as unknown as string[];
    expect(cookies.find((c) => c.startsWith('vt-vote='))).toContain(`Path=/vote/${f.id}`);
    const ballot = await agent.get(res.headers.location!).expect(200);
    expect(ballot.text).toContain('Name the river launch');
    expect(ballot.text).toContain('Your code belongs to this ballot');
    expect(ballot.text).not.toContain('Another vote');
    for (const form of [typed.trim(), f.codes[1]!, f.codes[1]!.replace(/-/g, '')]) {
      expect(ballot.text).not.toContain(form);
      expect(res.text).not.toContain(form);
    }
    // The member carries on from there as usual.
    const m = agentMember(agent);
    await sendTicks(m, f.id, ballot.text, [0]);
    const confirm = await m.get(`/vote/${f.id}/confirm`);
    expect((await castFrom(m, f.id, confirm.text)).status).toBe(303);
    expect(other.id).not.toBe(f.id);
  });

  it('finds the ballot whether or not the code was used (no code-status answer here)', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId, { epsilon: '0.5' });
    await castAll(s.ctx, f, [[0]]);
    const pages = [];
    for (const code of [f.codes[0]!, f.codes[1]!]) {
      const { agent, csrf } = await home();
      const res = await s.post(agent, '/ballot', { _csrf: csrf, code }).expect(303);
      const page = await agent.get(res.headers.location!).expect(200);
      pages.push({ location: res.headers.location, body: page.text.replace(/name="_csrf" value="[^"]*"/g, '') });
    }
    expect(pages[0]).toEqual(pages[1]);
  });

  it('follows a pasted ballot link, long or short, to this site only', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId, { epsilon: '0.5' });
    const { agent, csrf } = await home();
    const long = await s.post(agent, '/ballot', { _csrf: csrf, code: `https://elsewhere.example/vote/${f.id.toUpperCase()}?x=1` }).expect(303);
    expect(long.headers.location).toBe(`/vote/${f.id}`);
    const short = await s.post(agent, '/ballot', { _csrf: csrf, code: 'http://vote.example/v/ABCD2EFG' }).expect(303);
    expect(short.headers.location).toBe('/v/abcd2efg');
  });

  it.each([
    ['not a code', 'hello there', 400, 'That is not a ballot code'],
    ['a code with one slip', 'flip', 400, 'typing mistake'],
    ['a valid code no election issued', 'unknown', 404, 'No open ballot has this code'],
  ])('explains %s and keeps what was typed', async (_name, kind, status, message) => {
    const f = await openElectionFixture(s.ctx, s.organiserId, { epsilon: '0.5' });
    const real = f.codes[0]!;
    const slipped = real.slice(0, 2) + (real[2] === '7' ? '8' : '7') + real.slice(3);
    const typed = kind === 'flip' ? slipped : kind === 'unknown' ? '0000-0000-0000-00000' : kind;
    const { agent, csrf } = await home();
    const res = await s.post(agent, '/ballot', { _csrf: csrf, code: typed }).expect(status);
    expect(res.text).toContain(message);
    expect(res.text).toContain(`value="${typed}"`);
  });

  it('a code of a scheduled election leads to its ballot link, which says when voting opens', async () => {
    const opensAt = new Date(Date.parse(SUITE_START) + DAY);
    const f = await openElectionFixture(s.ctx, s.organiserId, { opensAt, closesAt: new Date(opensAt.getTime() + DAY), epsilon: '0.5' });
    const { agent, csrf } = await home();
    const res = await s.post(agent, '/ballot', { _csrf: csrf, code: f.codes[0]! }).expect(303);
    expect(res.headers.location).toBe(`/vote/${f.id}`);
  });

  it('a code of a draft is not found (drafts take no ballots)', async () => {
    const f = await createDraft(s.ctx, s.organiserId);
    const { agent, csrf } = await home();
    await s.post(agent, '/ballot', { _csrf: csrf, code: f.codes[0]! }).expect(404);
  });

  it('lists published results, newest first, and nothing unpublished', async () => {
    const { f } = await s.decided([[0], [1]], { title: 'Published boat name', epsilon: '0.5' });
    await s.decided([[0]], { title: 'Drawn but not yet published', epsilon: '0.5' }, false);
    const { html } = await home();
    expect(html).toContain('Published results');
    expect(html).toContain(`href="/results/${f.id}"`);
    expect(html).toContain('Published boat name');
    expect(html).not.toContain('Drawn but not yet published');
  });

  it('needs a CSRF token', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId, { epsilon: '0.5' });
    const agent = request.agent(s.app);
    await agent.get('/');
    await s.post(agent, '/ballot', { code: f.codes[0]! }).expect(403);
  });
});

describe.each(engines)('home page code box limits [%s]', (engine) => {
  const s = useMemberSuite(engine);
  it('after 300 failed look-ups from one address, failures only say "wait", while a right code still finds its ballot', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId, { epsilon: '0.5' });
    const agent = request.agent(s.app);
    const csrf = csrfFrom((await agent.get('/').expect(200)).text);
    // 300 failed look-ups (malformed codes count as failures too).
    for (let i = 0; i < 300; i++) await s.post(agent, '/ballot', { _csrf: csrf, code: 'hello' }).expect(400);
    const locked = await s.post(agent, '/ballot', { _csrf: csrf, code: '0000-0000-0000-00000' }).expect(429);
    expect(locked.text).not.toContain('No open ballot has this code');
    expect(locked.headers['retry-after']).toBeDefined();
    await s.post(agent, '/ballot', { _csrf: csrf, code: f.codes[0]! }).expect(303);
  }, 120_000);
});
