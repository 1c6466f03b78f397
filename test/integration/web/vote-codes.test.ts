import { describe, expect, it } from 'vitest';
import { generateCode } from '../../../src/custody/index.ts';
import { revokeCode } from '../../../src/elections/revokeCode.ts';
import { countTurnout } from '../../../src/elections/turnout.ts';
import { engines } from '../../helpers/databases.ts';
import { castAll, csrfFrom, openElectionFixture } from '../../helpers/fixtures.ts';
import { castFrom, receiptPage, toBallot, toConfirm, voteThrough } from '../../helpers/memberWalk.ts';
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

  it('a spent code is refused only at the cast (409), never at the first step; the organiser contact is shown', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId, { contact: 'The club secretary, at the boathouse' });
    const m = s.browser();
    await castAll(s.ctx, f, [[1]]);
    const confirm = await toConfirm(m, f.id, f.codes[0]!, [0]);
    const res = await castFrom(m, f.id, confirm.text);
    expect(res.status).toBe(409);
    expect(res.text).toContain('Your code has already been used');
    expect(res.text).toContain('If you pressed Back or Refresh after casting your ballot, this is expected');
    expect(res.text).toContain('The club secretary, at the boathouse');
    // The used code is forgotten by this browser: Back to the read-back goes to the code page.
    expect((await m.get(`/vote/${f.id}/confirm`)).location).toBe(`/vote/${f.id}`);
  });

  it('after a cast, Back to the steps says "already cast", and a cast sent again shows the same receipt: nothing counts twice', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const m = s.browser();
    const { confirm, receipt } = await voteThrough(m, f.id, f.codes[0]!, [0]);
    for (const step of ['ballot', 'confirm']) {
      const back = await m.get(`/vote/${f.id}/${step}`);
      expect(back.status).toBe(200);
      expect(back.text).toContain('This ballot has already been cast');
      expect(back.text).toContain(`href="/vote/${f.id}/receipt"`);
      expect(back.text).not.toContain('Cast my');
      expect(back.text).not.toContain(`action="/vote/${f.id}/cast"`);
    }
    const again = await castFrom(m, f.id, confirm.text);
    expect([again.status, again.location]).toEqual([303, `/vote/${f.id}/receipt`]);
    expect((await receiptPage(m, f.id)).receipt).toBe(receipt);
    // Ticks sent again from an old ballot page cast nothing either.
    const ticks = await s.post(m.agent, `/vote/${f.id}/confirm`, { _csrf: csrfFrom(confirm.text), approve: '1' });
    expect(ticks.headers.location).toBe(`/vote/${f.id}/confirm`);
    expect((await countTurnout(s.ctx.knex, f.id)).ballotsCast).toBe(1);
  });

  it('a revoked code is refused (410) at casting', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const code = f.codes[2]!;
    await toBallot(s.browser(), f.id, code);
    await revokeCode(s.ctx, { electionId: f.id, organiserId: s.organiserId, code });
    // Before the cast a withdrawn code looks like any other (no code-status oracle).
    const m = s.browser();
    const confirm = await toConfirm(m, f.id, code, [0]);
    const cast = await castFrom(m, f.id, confirm.text);
    expect(cast.status).toBe(410);
    expect(cast.text).toContain('Your ballot was not counted');
    expect((await countTurnout(s.ctx.knex, f.id)).ballotsCast).toBe(0);
  });
});
