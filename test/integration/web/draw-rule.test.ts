import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { findElection } from '../../../src/elections/electionRepo.ts';
import { makeExponentialDraw, makePermuteAndFlipDraw } from '../../../src/mechanism/index.ts';
import { engines } from '../../helpers/databases.ts';
import { openElectionFixture } from '../../helpers/fixtures.ts';
import { useMemberSuite } from '../../helpers/memberSuite.ts';
import { createElectionViaForm, makeOrganiser, signedIn } from './organiseSupport.ts';

/** The draw rule an organiser adopts, from the form through the tally to what members read. */
describe.each(engines)('draw rule: exponential mechanism or permute-and-flip [%s]', (engine) => {
  const s = useMemberSuite(engine);

  it('the form offers both rules, the exponential mechanism checked by default, with both chances side by side', async () => {
    const me = await makeOrganiser(s.ctx, 'rule-form@rowing.example');
    const agent = await signedIn(s.app, me.email);
    const page = await agent.get('/organise/elections/new').expect(200);
    expect(page.text).toMatch(/id="rule-exponential" name="rule" value="exponential" checked/);
    expect(page.text).toMatch(/id="rule-permute-and-flip" name="rule" value="permute-and-flip">/);
    expect(page.text).toContain('Enter the expected number of voters to compare the two draw rules.');

    const made = await createElectionViaForm(agent, { rule: 'permute-and-flip' });
    expect((await findElection(s.ctx.knex, made))!.rule).toBe('permute-and-flip');
    const edit = await agent.get(`/organise/elections/${made}/edit`).expect(200);
    expect(edit.text).toMatch(/id="rule-permute-and-flip" name="rule" value="permute-and-flip" checked/);
    // 40 expected voters, 3 options, ε = 1: a clear favourite leads by 10, a typical lead is 4.
    expect(edit.text).toContain('A clear favourite: ahead of every other option by one voter in four (10 approvals)');
    expect(edit.text).toMatch(/\(4 approvals\)<\/th><td>\d+\.\d%<\/td><td>\d+\.\d%<\/td>/);

    const dashboard = await agent.get(`/organise/elections/${made}`).expect(200);
    expect(dashboard.text).toContain('<dt>Draw rule</dt><dd>Permute-and-flip</dd>');

    // No rule sent (an older form): the default.
    const plain = await createElectionViaForm(agent);
    expect((await findElection(s.ctx.knex, plain))!.rule).toBe('exponential');
  });

  it('a permute-and-flip election: the ballot page names it, the tally uses it, the statement and result page say so', async () => {
    const open = await openElectionFixture(s.ctx, s.organiserId, { rule: 'permute-and-flip', codes: 3 });
    const ballot = await request(s.app).get(`/vote/${open.id}`).expect(200);
    expect(ballot.text).toContain('Draw rule: permute-and-flip.');

    const { f, statement } = await s.decided([[0, 1], [1], [1, 2]], { rule: 'permute-and-flip' });
    expect(statement.mechanism).toBe('permute-and-flip');
    expect(statement.sampler).toBe('exact-bigint-permute-and-flip');
    const res = await request(s.app).get(`/results/${f.id}`).expect(200);
    expect(res.text).toMatch(/<dt>Draw rule<\/dt>\s*<dd>Permute-and-flip<\/dd>/);
    expect(res.text).toContain('Draw rule: permute-and-flip.');
    // The chart's bound is permute-and-flip's own (bounds.ts), smaller than the exponential mechanism's.
    const m95 = makePermuteAndFlipDraw({ epsilon: '1', options: 4, seats: 1, neighbour: 'replace-one' }).bounds().marginFor['0.95'];
    expect(m95).toBeLessThan(makeExponentialDraw({ epsilon: '1', options: 4, seats: 1, neighbour: 'replace-one' }).bounds().marginFor['0.95']);
    expect(res.text).toContain(`with a lead of ${m95} approvals over every other option the chance is at least 95%`);
  });

  it('an exponential-mechanism election says so on the ballot and result pages', async () => {
    const { f, statement } = await s.decided([[0], [1]]);
    expect(statement.mechanism).toBe('exponential-mechanism');
    const res = await request(s.app).get(`/results/${f.id}`).expect(200);
    expect(res.text).toMatch(/<dt>Draw rule<\/dt>\s*<dd>The exponential mechanism<\/dd>/);
    const open = await openElectionFixture(s.ctx, s.organiserId, { codes: 1 });
    expect((await request(s.app).get(`/vote/${open.id}`).expect(200)).text).toContain('Draw rule: the exponential mechanism.');
  });

  it('the members’ help page explains both rules, with the references', async () => {
    const res = await request(s.app).get('/help/how-the-result-is-drawn').expect(200);
    expect(res.text).toContain('<strong>Two draw rules.</strong>');
    expect(res.text).toContain('Permute-and-flip: a new mechanism for differentially private selection. NeurIPS 2020.');
  });

  it('"Choosing ε" shows permute-and-flip’s own 95% lead beside the exponential mechanism’s', async () => {
    const res = await request(s.app).get('/help/choosing-epsilon?options=6&seats=1&epsilon=1').expect(200);
    expect(res.text).toContain('<th scope="col">Lead for 95%, permute-and-flip</th>');
    const row = /<tr><th scope="row">0\.5<\/th>\s*<td>(\d+)<\/td><td>(\d+)<\/td><td>(\d+)<\/td><td>(\d+)<\/td>/.exec(res.text);
    expect(row).not.toBeNull();
    const pf = makePermuteAndFlipDraw({ epsilon: '0.5', options: 6, seats: 1, neighbour: 'replace-one' }).bounds(0.05);
    expect(Number(row![4])).toBe(pf.marginFor['0.95']);
    expect(Number(row![4])).toBeLessThan(Number(row![2]));
  });
});
