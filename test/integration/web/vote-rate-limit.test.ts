import { describe, expect, it } from 'vitest';
import { generateCode } from '../../../src/custody/index.ts';
import { engines } from '../../helpers/databases.ts';
import request from 'supertest';
import { testApp } from '../../helpers/app.ts';
import { csrfFrom, formBody, openElectionFixture } from '../../helpers/fixtures.ts';
import { useMemberSuite } from '../../helpers/memberSuite.ts';

/**
 * A whole meeting often votes from one address (the hall's wifi), so the code-step limiter must
 * never stop members whose codes work; only failed attempts use it up (OWASP Authentication
 * Cheat Sheet: limit failed attempts). The allowance is 300 failures per 10 minutes.
 */
const ALLOWANCE = 300;

describe.each(engines)('member voting, attempt limits [%s]', (engine) => {
  const s = useMemberSuite(engine);
  const { begin, post } = s;

  it('a meeting behind one address is not locked out by working codes', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const { agent, csrf } = await begin(f);
    // Each member shows their ballot and may come back once to change their ticks: more than the allowance in all.
    const statuses = new Set<number>();
    for (let i = 0; i <= ALLOWANCE; i++) statuses.add((await post(agent, `/vote/${f.id}/ballot`, { _csrf: csrf, code: f.codes[0]! })).status);
    expect([...statuses]).toEqual([200]);
  });

  it('failed code attempts at any step are still limited', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const { agent, csrf } = await begin(f);
    const unknown = generateCode(s.ctx.random).display;
    const steps = ['ballot', 'confirm', 'cast'];
    const statuses: number[] = [];
    for (let i = 0; i < ALLOWANCE; i++) statuses.push((await post(agent, `/vote/${f.id}/${steps[i % 3]}`, { _csrf: csrf, code: unknown })).status);
    expect(new Set(statuses)).toEqual(new Set([404]));
    const locked = await post(agent, `/vote/${f.id}/ballot`, { _csrf: csrf, code: unknown });
    expect(locked.status).toBe(429);
    expect(locked.text).toMatch(/Wait \d+ minutes?, then try again/);
    expect(Number(locked.headers['retry-after'])).toBeGreaterThan(0);
    // A valid code is always accepted, however many failures came from the same address.
    for (const step of ['ballot', 'confirm'])
      expect((await post(agent, `/vote/${f.id}/${step}`, { _csrf: csrf, code: f.codes[1]! })).status).toBe(200);
  });

  it('the count lives in the database: a second app server on it (or a restart) sees the same failures', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const { agent, csrf } = await begin(f);
    const unknown = generateCode(s.ctx.random).display;
    for (let i = 0; i < ALLOWANCE; i++) await post(agent, `/vote/${f.id}/ballot`, { _csrf: csrf, code: unknown });
    const other = request.agent(testApp(s.ctx));
    const start = await other.get(`/vote/${f.id}`).expect(200);
    const res = await other
      .post(`/vote/${f.id}/ballot`)
      .type('form')
      .send(formBody({ _csrf: csrfFrom(start.text), code: unknown }));
    expect(res.status).toBe(429);
  });
});
