import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { countTurnout } from '../../../src/elections/turnout.ts';
import { engines } from '../../helpers/databases.ts';
import { csrfFrom, openElectionFixture } from '../../helpers/fixtures.ts';
import { useMemberSuite } from '../../helpers/memberSuite.ts';

/**
 * A member whose session expired mid-ballot (idle limit, OWASP ASVS 5.0 §7.3) gets their code and
 * ticks back with a fresh token instead of losing them; nothing is cast without a new confirmation.
 */
describe.each(engines)('member voting after the page expired [%s]', (engine) => {
  const s = useMemberSuite(engine);

  it('keeps the code and ticks, resumes at the confirmation step, and casts only when confirmed', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const { csrf } = await s.begin(f);
    const code = f.codes[0]!;
    // The browser lost its token cookie (closed and reopened) while the page stayed open.
    const agent = request.agent(s.app);

    const expired = await s.post(agent, `/vote/${f.id}/cast`, { _csrf: csrf, code, approve: ['0', '2'] }).expect(403);
    expect(expired.headers['cache-control']).toContain('no-store');
    expect(expired.text).toContain('This page had expired');
    expect(expired.text).toContain('has <strong>not</strong> been cast');
    expect(expired.text).toContain(`action="/vote/${f.id}/confirm"`);
    expect(expired.text).toContain(`name="code" value="${code}"`);
    expect(expired.text.match(/name="approve" value="(\d+)"/g)).toEqual(['name="approve" value="0"', 'name="approve" value="2"']);
    expect((await countTurnout(s.ctx.knex, f.id)).ballotsCast).toBe(0);

    const confirm = await s.post(agent, `/vote/${f.id}/confirm`, { _csrf: csrfFrom(expired.text), code, approve: ['0', '2'] }).expect(200);
    expect(confirm.text).toContain('Read back your ballot');
    expect(confirm.text).toContain(f.options[0]!.label);
    expect(confirm.text).toContain(f.options[2]!.label);
    await s.post(agent, `/vote/${f.id}/cast`, { _csrf: csrfFrom(confirm.text), code, approve: ['0', '2'] }).expect(303);
    expect((await countTurnout(s.ctx.knex, f.id)).ballotsCast).toBe(1);
  });

  it('does not resume other forms: an organiser form without a token is a plain 403', async () => {
    const res = await s
      .post((await s.begin(await openElectionFixture(s.ctx, s.organiserId))).agent, '/organise/sign-in', { email: 'a@example.org', password: 'x' })
      .expect(403);
    expect(res.text).not.toContain('This page had expired');
  });
});
