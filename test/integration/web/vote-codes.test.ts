import { describe, expect, it } from 'vitest';
import { generateCode } from '../../../src/custody/index.ts';
import { revokeCode } from '../../../src/elections/revokeCode.ts';
import { countTurnout } from '../../../src/elections/turnout.ts';
import { engines } from '../../helpers/databases.ts';
import { castAll, openElectionFixture } from '../../helpers/fixtures.ts';
import { useMemberSuite } from '../../helpers/memberSuite.ts';

/** Changes the check symbol (the 27th) to another valid one: exactly the slip the check exists to catch. */
function withWrongCheck(code: string): string {
  const last = code.slice(-1);
  return code.slice(0, -1) + (last === '0' ? '1' : '0');
}

/** Each ballot-code problem has its own page and status, and a fixable one keeps what the member typed. */
describe.each(engines)('member voting, code problems [%s]', (engine) => {
  const s = useMemberSuite(engine);
  const { begin, post } = s;

  it('a typing slip in the code re-renders the code form with the input kept (400)', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
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
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const { agent, csrf } = await begin(f);
    const res = await post(agent, `/vote/${f.id}/ballot`, { _csrf: csrf, code: 'oak-tree' }).expect(400);
    expect(res.text).toContain('That does not look like a ballot code');
    expect(res.text).toContain('value="oak-tree"');
  });

  it('an unknown code (well-formed, not issued here) gets its own page (404) with the input kept', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const other = await openElectionFixture(s.ctx, s.organiserId);
    const { agent, csrf } = await begin(f);
    for (const code of [generateCode(s.ctx.random).display, other.codes[0]!]) {
      const res = await post(agent, `/vote/${f.id}/ballot`, { _csrf: csrf, code }).expect(404);
      expect(res.text).toContain('We do not recognise that ballot code');
      expect(res.text).toContain(`value="${code}"`);
    }
  });

  it('a spent code is refused only at the cast (409), never at the first step', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const { agent, csrf } = await begin(f);
    const code = f.codes[0]!;
    await castAll(s.ctx, f, [[1]]);
    await post(agent, `/vote/${f.id}/ballot`, { _csrf: csrf, code }).expect(200);
    const res = await post(agent, `/vote/${f.id}/cast`, { _csrf: csrf, code, approve: '0' }).expect(409);
    expect(res.text).toContain('Your code has already been used');
  });

  it('a resubmission (refresh of the receipt, or back to the confirmation) finds the code used and counts nothing twice', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const { agent, csrf } = await begin(f);
    const code = f.codes[0]!;
    const fields = { _csrf: csrf, code, approve: ['0'] };
    await post(agent, `/vote/${f.id}/cast`, fields).expect(303);
    const again = await post(agent, `/vote/${f.id}/cast`, fields).expect(409);
    expect(again.text).toContain('Your code has already been used');
    expect(again.text).toContain('If you pressed Back or Refresh after casting your ballot, this is expected');
    // Back to the confirmation shows it again (no code-status oracle before a cast); casting from it is refused.
    await post(agent, `/vote/${f.id}/confirm`, fields).expect(200);
    expect((await countTurnout(s.ctx.knex, f.id)).ballotsCast).toBe(1);
  });

  it('a revoked code is refused (410) at casting', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const { agent, csrf } = await begin(f);
    const code = f.codes[2]!;
    await post(agent, `/vote/${f.id}/ballot`, { _csrf: csrf, code }).expect(200);
    await revokeCode(s.ctx, { electionId: f.id, organiserId: s.organiserId, code });
    // Before the cast a withdrawn code looks like any other (no code-status oracle).
    await post(agent, `/vote/${f.id}/ballot`, { _csrf: csrf, code }).expect(200);
    const cast = await post(agent, `/vote/${f.id}/cast`, { _csrf: csrf, code, approve: '0' }).expect(410);
    expect(cast.text).toContain('Your ballot was not counted');
    expect((await countTurnout(s.ctx.knex, f.id)).ballotsCast).toBe(0);
  });
});
