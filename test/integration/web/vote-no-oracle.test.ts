import { describe, expect, it } from 'vitest';
import { revokeCode } from '../../../src/elections/revokeCode.ts';
import { countTurnout } from '../../../src/elections/turnout.ts';
import { engines } from '../../helpers/databases.ts';
import { castAll, openElectionFixture, type ElectionFixture } from '../../helpers/fixtures.ts';
import { useMemberSuite } from '../../helpers/memberSuite.ts';
import { csrfOf, sendCode, sendTicks, toBallot, voteThrough } from '../../helpers/memberWalk.ts';

/**
 * The organiser holds every code. Before a ballot is cast, the ballot step must not tell a spent,
 * an unspent and a withdrawn code apart, or an organiser who noted who got which code learns who
 * voted. Only the final cast may say "already used", and a cast with an unspent code spends it,
 * so a probe is never silent.
 */
describe.each(engines)('ballot step is no code-status oracle [%s]', (engine) => {
  const s = useMemberSuite(engine);
  const { begin } = s;

  /** Each answer's status and where it leads, and the page reached, with the per-visit CSRF token and read-back digest taken out. */
  async function answer(f: ElectionFixture, step: 'ballot' | 'confirm', code: string) {
    const m = s.browser();
    const sent = await sendCode(m, f.id, code);
    const answers = [sent, await m.get(`/vote/${f.id}/ballot`)];
    if (step === 'confirm') answers.push(await sendTicks(m, f.id, answers[1]!.text, [1]), await m.get(`/vote/${f.id}/confirm`));
    const page = answers.at(-1)!;
    const csrf = csrfOf(page.text);
    const body = page.text
      .split(csrf)
      .join('CSRF')
      .split(code)
      .join('CODE')
      .replace(/name="readBack" value="[^"]*"/g, 'name="readBack" value="TAG"');
    return { status: answers.map((a) => `${a.status} ${a.location ?? ''} ${a.setCookies.map((c) => c.split('=')[0]).join()}`).join(' | '), body };
  }

  it('spent, unspent, withdrawn and used-then-withdrawn codes answer identically at the ballot and confirm steps', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId, { codes: 4 });
    const [unspent, spent, revoked, spentRevoked] = f.codes as [string, string, string, string];
    await castAll(s.ctx, f, [[0]], 1);
    await castAll(s.ctx, f, [[2]], 3);
    await revokeCode(s.ctx, { electionId: f.id, organiserId: s.organiserId, code: revoked });
    await revokeCode(s.ctx, { electionId: f.id, organiserId: s.organiserId, code: spentRevoked });

    for (const step of ['ballot', 'confirm'] as const) {
      const reference = await answer(f, step, unspent);
      expect(reference.status).toMatch(step === 'ballot' ? /^303 .* \| 200 / : /^303 .* \| 200 .* \| 303 .* \| 200 /);
      for (const code of [spent, revoked, spentRevoked]) {
        const other = await answer(f, step, code);
        expect(other.status).toBe(reference.status);
        expect(other.body).toBe(reference.body);
      }
    }
    // Probing spent nothing.
    expect((await countTurnout(s.ctx.knex, f.id)).ballotsCast).toBe(2);
  });

  it('"already used" appears only at the final cast; a cast with an unspent code spends it', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId, { codes: 2 });
    const [probed, spent] = f.codes as [string, string];
    await castAll(s.ctx, f, [[1]], 1);
    const used = await voteThrough(s.browser(), f.id, spent, [0]);
    expect(used.cast.status).toBe(409);
    expect(used.cast.text).toContain('already been used');
    // The organiser's probe that goes as far as casting is not silent: the member later finds the code used.
    expect((await voteThrough(s.browser(), f.id, probed, [])).cast.status).toBe(303);
    expect((await voteThrough(s.browser(), f.id, probed, [2])).cast.status).toBe(409);
  });

  it('members read what each party can learn before they vote, on the code and ballot pages', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId, { publishTurnout: true });
    const { html } = await begin(f);
    const ballot = await toBallot(s.browser(), f.id, f.codes[0]!);
    for (const page of [html, ballot.text]) {
      for (const heading of [
        'What other members can learn about you',
        'What anyone can learn from the published result',
        'What the organiser can learn',
      ]) {
        expect(page).toContain(heading);
      }
      expect(page).toContain('never how many ballots were cast');
      expect(page).toContain('is published and is not protected');
    }
  });

  it('at the final cast a withdrawn code answers the same whether or not it was used before', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId, { codes: 2 });
    const [fresh, used] = f.codes as [string, string];
    await castAll(s.ctx, f, [[0]], 1);
    for (const code of [fresh, used]) await revokeCode(s.ctx, { electionId: f.id, organiserId: s.organiserId, code });
    const answers = [];
    for (const code of [fresh, used]) {
      const { cast } = await voteThrough(s.browser(), f.id, code, [1]);
      answers.push({ status: cast.status, body: cast.text.split(code).join('CODE') });
    }
    expect(answers[0]!.status).toBe(410);
    expect(answers[1]).toEqual(answers[0]);
    expect((await countTurnout(s.ctx.knex, f.id)).ballotsCast).toBe(1);
  });
});
