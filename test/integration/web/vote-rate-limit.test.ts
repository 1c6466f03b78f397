import { describe, expect, it } from 'vitest';
import { generateCode } from '../../../src/custody/index.ts';
import { engines } from '../../helpers/databases.ts';
import request from 'supertest';
import { testApp } from '../../helpers/app.ts';
import { csrfFrom, formBody, openElectionFixture } from '../../helpers/fixtures.ts';
import { agentMember, useMemberSuite } from '../../helpers/memberSuite.ts';
import { castFrom, voteThrough } from '../../helpers/memberWalk.ts';

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
    expect([...statuses]).toEqual([303]);
  });

  it('failed steps are still limited, and a member whose code works walks every step past the limit', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const { agent, csrf } = await begin(f);
    const unknown = generateCode(s.ctx.random).display;
    const statuses: number[] = [];
    // Failures at the code step, and casts this browser cannot make (no step cookie): both count.
    for (let i = 0; i < ALLOWANCE; i++)
      statuses.push((await post(agent, `/vote/${f.id}/${i % 3 ? 'ballot' : 'cast'}`, { _csrf: csrf, code: unknown, readBack: 'x' })).status);
    expect(new Set(statuses)).toEqual(new Set([404, 409]));
    const locked = await post(agent, `/vote/${f.id}/ballot`, { _csrf: csrf, code: unknown });
    expect(locked.status).toBe(429);
    expect(locked.text).toMatch(/Wait \d+ minutes?, then try again/);
    expect(Number(locked.headers['retry-after'])).toBeGreaterThan(0);
    // A valid code is always accepted, however many failures came from the same address: every step, to the receipt.
    const { cast, receipt } = await voteThrough(agentMember(agent), f.id, f.codes[1]!, [0]);
    expect(cast.status).toBe(303);
    expect(receipt).toMatch(/^[0-9A-Z]{5}-[0-9A-Z]{5}$/);
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

  it('the GET of each step and a cast by a member whose code works never use up the allowance', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const counted = async () => JSON.stringify(await s.ctx.knex('rate_limits').where('key', 'like', 'code-%').orderBy('key').select('key', 'points'));
    const before = await counted();
    const m = s.browser();
    const { confirm } = await voteThrough(m, f.id, f.codes[0]!, [1]);
    // Nothing failed, so nothing was counted (failures-only); the sent-again cast answers 303 too.
    expect((await castFrom(m, f.id, confirm.text)).status).toBe(303);
    expect(await counted()).toBe(before);
    // Control: one failed step is counted.
    await voteThrough(s.browser(), f.id, f.codes[0]!, [1]);
    expect(await counted()).not.toBe(before);
  });
});
