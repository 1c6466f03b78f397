import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { countTurnout } from '../../../src/elections/turnout.ts';
import { engines } from '../../helpers/databases.ts';
import { csrfFrom, openElectionFixture } from '../../helpers/fixtures.ts';
import { agentMember, useMemberSuite } from '../../helpers/memberSuite.ts';
import { castFrom, toBallot, toConfirm } from '../../helpers/memberWalk.ts';

/**
 * A member whose form token expired mid-ballot (the browser was closed and reopened, dropping the
 * token cookie while the page stayed open) gets what they sent back with a fresh token instead of
 * losing it; nothing is cast without a new read-back. A member whose step cookie lapsed keeps their
 * ticks and types the code again. OWASP ASVS 5.0 §7.3 (idle limits).
 */
describe.each(engines)('member voting after the page expired [%s]', (engine) => {
  const s = useMemberSuite(engine);

  /** The same browser after a restart: the step cookie (with a max age) stays, the token cookie (a session cookie) is gone. */
  function restarted(m: ReturnType<typeof s.browser>, electionId: string) {
    const step = m.jar
      .header()
      .split('; ')
      .find((c) => c.startsWith('vt-vote='))!;
    const agent = request.agent(s.app);
    agent.jar.setCookie(`${step}; Path=/vote/${electionId}`, '127.0.0.1', '/');
    return agentMember(agent);
  }

  it('a cast sent with an expired token resumes at the read-back, and casts only when confirmed', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const before = s.browser();
    const confirm = await toConfirm(before, f.id, f.codes[0]!, [0, 2]);
    const m = restarted(before, f.id);
    const expired = await s.post(m.agent, `/vote/${f.id}/cast`, { _csrf: csrfFrom(confirm.text), readBack: 'x' }).expect(403);
    expect(expired.headers['cache-control']).toContain('no-store');
    expect(expired.text).toContain('This page had expired');
    expect(expired.text).toContain('has <strong>not</strong> been cast');
    expect(expired.text).toContain(`<a class="button" href="/vote/${f.id}/confirm">Continue where I left off</a>`);
    expect(expired.text).not.toContain(f.codes[0]!);
    expect((await countTurnout(s.ctx.knex, f.id)).ballotsCast).toBe(0);

    const again = await m.get(`/vote/${f.id}/confirm`);
    expect(again.status).toBe(200);
    expect(again.text).toContain(f.options[0]!.label);
    expect(again.text).toContain(f.options[2]!.label);
    expect((await castFrom(m, f.id, again.text)).status).toBe(303);
    expect((await countTurnout(s.ctx.knex, f.id)).ballotsCast).toBe(1);
  });

  it('ticks sent with an expired token come back with a fresh token and go on to the read-back', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const before = s.browser();
    const ballot = await toBallot(before, f.id, f.codes[0]!);
    const m = restarted(before, f.id);
    const expired = await s.post(m.agent, `/vote/${f.id}/confirm`, { _csrf: csrfFrom(ballot.text), approve: ['1', '3'] }).expect(403);
    expect(expired.text).toContain(`action="/vote/${f.id}/confirm"`);
    expect(expired.text.match(/name="approve" value="(\d+)"/g)).toEqual(['name="approve" value="1"', 'name="approve" value="3"']);
    expect(expired.text).not.toContain('name="code"');
    const resent = await s.post(m.agent, `/vote/${f.id}/confirm`, { _csrf: csrfFrom(expired.text), approve: ['1', '3'] }).expect(303);
    expect(resent.headers.location).toBe(`/vote/${f.id}/confirm`);
    const confirm = await m.get(`/vote/${f.id}/confirm`);
    expect(confirm.text).toContain(f.options[1]!.label);
    expect(confirm.text).toContain(f.options[3]!.label);
  });

  it('a code sent with an expired token comes back in the form, with a fresh token', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const { csrf } = await s.begin(f);
    const agent = request.agent(s.app);
    const expired = await s.post(agent, `/vote/${f.id}/ballot`, { _csrf: csrf, code: f.codes[0]! }).expect(403);
    expect(expired.text).toContain(`name="code" value="${f.codes[0]!}"`);
    await s.post(agent, `/vote/${f.id}/ballot`, { _csrf: csrfFrom(expired.text), code: f.codes[0]! }).expect(303);
  });

  it('ticks sent after the step cookie lapsed are kept: the code is asked again and leads to the read-back', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const m = s.browser();
    const ballot = await toBallot(m, f.id, f.codes[0]!);
    s.clock.advance(31 * 60_000); // past the member idle limit
    const lapsed = await s.post(m.agent, `/vote/${f.id}/confirm`, { _csrf: csrfFrom(ballot.text), approve: ['0', '3'] }).expect(303);
    expect(lapsed.headers.location).toBe(`/vote/${f.id}`);
    const start = await m.get(`/vote/${f.id}`);
    expect(start.text).toContain('Your ticks are kept');
    expect(start.text).not.toMatch(/name="approve"/);
    const sent = await s.post(m.agent, `/vote/${f.id}/ballot`, { _csrf: csrfFrom(start.text), code: f.codes[0]! }).expect(303);
    expect(sent.headers.location).toBe(`/vote/${f.id}/confirm`);
    const confirm = await m.get(`/vote/${f.id}/confirm`);
    expect(confirm.text).toContain(`<li>${f.options[0]!.label}</li>`);
    expect(confirm.text).toContain(`<li>${f.options[3]!.label}</li>`);
    expect((await castFrom(m, f.id, confirm.text)).status).toBe(303);
    expect((await countTurnout(s.ctx.knex, f.id)).ballotsCast).toBe(1);
  });

  it('a cast sent after the step cookie lapsed casts nothing and says so', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const m = s.browser();
    const confirm = await toConfirm(m, f.id, f.codes[0]!, [1]);
    s.clock.advance(31 * 60_000);
    const res = await castFrom(m, f.id, confirm.text);
    expect(res.status).toBe(409);
    expect(res.text).toContain('Nothing was cast just now');
    expect(res.text).toContain(`href="/vote/${f.id}"`);
    expect((await countTurnout(s.ctx.knex, f.id)).ballotsCast).toBe(0);
  });

  it('does not resume other forms: an organiser form without a token is a plain 403', async () => {
    const res = await s
      .post((await s.begin(await openElectionFixture(s.ctx, s.organiserId))).agent, '/organise/sign-in', { email: 'a@example.org', password: 'x' })
      .expect(403);
    expect(res.text).not.toContain('This page had expired');
  });
});
