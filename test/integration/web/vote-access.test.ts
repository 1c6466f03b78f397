import { describe, expect, it } from 'vitest';
import request from 'supertest';
import { countTurnout } from '../../../src/elections/turnout.ts';
import { engines } from '../../helpers/databases.ts';
import { createDraft, csrfFrom, openElectionFixture } from '../../helpers/fixtures.ts';
import { castFrom, hiddenFields, sendTicks, toBallot, toConfirm } from '../../helpers/memberWalk.ts';
import { useMemberSuite, SUITE_START, DAY } from '../../helpers/memberSuite.ts';

/** Opening and closing times (moved with the test clock), unknown and draft elections, tampered ballots and CSRF. */
describe.each(engines)('member voting, timing and access [%s]', (engine) => {
  const s = useMemberSuite(engine);
  const { begin, post, clock } = s;

  it('before the opening time the page says voting has not started (409)', async () => {
    const opensAt = new Date(Date.parse(SUITE_START) + DAY);
    const f = await openElectionFixture(s.ctx, s.organiserId, { opensAt, closesAt: new Date(opensAt.getTime() + DAY) });
    const res = await request(s.app).get(`/vote/${f.id}`).expect(409);
    expect(res.text).toContain('Voting has not started yet');
    expect(res.text).toContain(`datetime="${opensAt.toISOString()}"`);
    clock.set(opensAt);
    const { agent, csrf } = await begin(f);
    clock.set(new Date(opensAt.getTime() - 1000)); // a code check a second early is refused too
    const early = await post(agent, `/vote/${f.id}/ballot`, { _csrf: csrf, code: f.codes[0]! }).expect(409);
    expect(early.text).toContain('Voting has not started yet');
  });

  it('after the closing time the page says voting has closed (409) and links to the result', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    clock.advance(8 * DAY);
    const res = await request(s.app).get(`/vote/${f.id}`).expect(409);
    expect(res.text).toContain('Voting has closed');
    expect(res.text).toContain(`href="/results/${f.id}"`);
  });

  it('when voting closes between steps, the member is told clearly the ballot was not counted', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    clock.advance(7 * DAY - 10 * 60_000); // ten minutes before the close, inside the session's idle limit
    const m = s.browser();
    const ballot = await toBallot(m, f.id, f.codes[0]!);
    const other = s.browser();
    const confirm = await toConfirm(other, f.id, f.codes[1]!, [1]);
    clock.advance(10 * 60_000); // exactly the closing instant: closed (acceptsBallotsAt is now < closesAt)
    for (const res of [await sendTicks(m, f.id, ballot.text, [1]), await m.get(`/vote/${f.id}/ballot`), await castFrom(other, f.id, confirm.text)]) {
      expect(res.status).toBe(409);
      expect(res.text).toContain('Voting has closed');
      expect(res.text).toContain('Your ballot was not counted');
    }
    expect((await countTurnout(s.ctx.knex, f.id)).ballotsCast).toBe(0);
  });

  it('a ballot that names positions the election does not have is refused (422), nothing cast', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const m = s.browser();
    const ballot = await toBallot(m, f.id, f.codes[0]!);
    for (const approve of [['4'], ['1', '1'], ['-1'], ['one'], ['01']]) {
      const res = await post(m.agent, `/vote/${f.id}/confirm`, { _csrf: csrfFrom(ballot.text), approve }).expect(422);
      expect(res.text).toContain('That ballot could not be read');
      expect(res.text).toContain(`href="/vote/${f.id}/ballot"`);
    }
    // The ballot is still there, as it was.
    expect((await m.get(`/vote/${f.id}/ballot`)).status).toBe(200);
    expect((await countTurnout(s.ctx.knex, f.id)).ballotsCast).toBe(0);
  });

  it('unknown and malformed election ids are 404; a draft says it is not open yet and shows nothing of itself (409)', async () => {
    const draft = await createDraft(s.ctx, s.organiserId);
    for (const id of ['00000000-0000-4000-8000-000000000000', 'not-an-id']) {
      const res = await request(s.app).get(`/vote/${id}`).expect(404);
      expect(res.text).toContain('We could not find that election.');
    }
    const res = await request(s.app).get(`/vote/${draft.id}`).expect(409);
    expect(res.text).toContain('This ballot is not open yet');
    const { csrf, agent } = await begin(await openElectionFixture(s.ctx, s.organiserId));
    for (const [step, fields] of [
      ['ballot', { code: draft.codes[0]! }],
      ['confirm', { approve: '0' }],
      ['cast', { readBack: 'x' }],
    ] as const) {
      const r = await post(agent, `/vote/${draft.id}/${step}`, { _csrf: csrf, ...fields }).expect(409);
      expect(r.text).toContain('This ballot is not open yet');
      expect(r.text).not.toContain(draft.codes[0]!);
    }
    for (const step of ['ballot', 'confirm', 'receipt']) {
      const r = await request(s.app).get(`/vote/${draft.id}/${step}`).expect(409);
      expect(r.text).toContain('This ballot is not open yet');
    }
  });

  it('refuses every POST without a valid CSRF token (403) and casts nothing', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const m = s.browser();
    const confirm = await toConfirm(m, f.id, f.codes[0]!, [0]);
    const csrf = csrfFrom(confirm.text);
    const readBack = hiddenFields(confirm.text, '/cast').fields.find(([k]) => k === 'readBack')![1];
    const { agent } = m;
    const code = f.codes[0]!;
    for (const step of ['ballot', 'confirm', 'cast']) {
      await post(agent, `/vote/${f.id}/${step}`, { code, approve: '0', readBack }).expect(403);
      await post(agent, `/vote/${f.id}/${step}`, { _csrf: csrf.replace(/^./, (c) => (c === 'a' ? 'b' : 'a')), code, approve: '0', readBack }).expect(
        403,
      );
      // A token from another session is no good either.
      const { csrf: foreign } = await begin(f);
      await post(agent, `/vote/${f.id}/${step}`, { _csrf: foreign, code, approve: '0', readBack }).expect(403);
    }
    expect((await countTurnout(s.ctx.knex, f.id)).ballotsCast).toBe(0);
  });
});
