import { describe, expect, it } from 'vitest';
import request from 'supertest';
import { findElection } from '../../../src/elections/electionRepo.ts';
import { AlreadyTallied, OverBudget } from '../../../src/elections/errors.ts';
import { publishResult } from '../../../src/elections/publishResult.ts';
import { openElection } from '../../../src/elections/openElection.ts';
import { engines } from '../../helpers/databases.ts';
import { createDraft, FIXTURE_PASSWORD, openFixture, tallyFixture } from '../../helpers/fixtures.ts';
import { DAY, useMemberSuite } from '../../helpers/memberSuite.ts';
import { csrfFrom } from './organiseSupport.ts';

const ledgerRows = (s: ReturnType<typeof useMemberSuite>, groupId: string) =>
  s.ctx
    .knex('privacy_ledger')
    .where({ group_id: groupId })
    .orderBy('id')
    .select('election_id', 'how_voted_epsilon', 'whether_voted_epsilon', 'unprotected');

describe.each(engines)('the privacy ledger [%s]', (engine) => {
  const s = useMemberSuite(engine);

  it('charges a withheld draw and a shredded one at the draw, and nothing can undo a charge', async () => {
    const group = 'Tenants association';
    const withheld = await s.decided([[0], [1]], { memberGroup: group, epsilon: '0.5', neighbour: 'add-remove' }, false);
    const e = (await findElection(s.ctx.knex, withheld.f.id))!;
    expect(e.state).toBe('tallied');
    const rows = await ledgerRows(s, e.groupId!);
    expect(rows.map((r) => [r.election_id, r.how_voted_epsilon, r.whether_voted_epsilon])).toEqual([[e.id, '1', '0.5']]); // 2ε for how under add/remove

    s.clock.set('2026-07-01T09:00:00Z');
    const shredded = await s.decided([[0, 1], [2]], { memberGroup: ' tenants ASSOCIATION ', epsilon: '1', publishTurnout: true });
    const p = (await findElection(s.ctx.knex, shredded.f.id))!;
    expect([p.state, p.shreddedAt !== null, p.groupId]).toEqual(['published', true, e.groupId]);
    const after = await ledgerRows(s, e.groupId!);
    expect(after).toHaveLength(2);
    expect(after[1]!.unprotected).toEqual(['anyone-voted', 'exact-turnout']);

    // Append-only, enforced by the database, for the ledger and for signed statements alike.
    await expect(s.ctx.knex('privacy_ledger').where({ election_id: e.id }).delete()).rejects.toThrow(/append-only/);
    await expect(s.ctx.knex('privacy_ledger').update({ how_voted_epsilon: '0' })).rejects.toThrow(/append-only/);
    await expect(s.ctx.knex('statements').where({ election_id: e.id }).delete()).rejects.toThrow(/append-only/);
    expect(await ledgerRows(s, e.groupId!)).toHaveLength(2);
    // One election, one signed draw: a second statement or charge for the same election is refused.
    const first = await s.ctx.knex('statements').where({ election_id: e.id }).first();
    await expect(s.ctx.knex('statements').insert({ ...first, draw_sequence: first.draw_sequence + 1000 })).rejects.toThrow();
    await expect(
      s.ctx.knex('privacy_ledger').insert({
        group_id: e.groupId,
        election_id: e.id,
        kind: 'draw',
        charged_at: new Date(),
        how_voted_epsilon: '0',
        whether_voted_epsilon: '0',
        unprotected: '[]',
      }),
    ).rejects.toThrow();

    // The public ledger page lists both draws, the withheld one marked, with the 12-month totals,
    // from the draw's whole minute on (the time the draw is stamped with).
    const drawnAt = (await findElection(s.ctx.knex, p.id))!.talliedAt!;
    s.clock.set(new Date(drawnAt.getTime() - 1000)); // a second before the draw's minute: not listed yet
    const early = (await request(s.app).get(`/groups/${e.groupId}/ledger`).expect(200)).text;
    expect(early).not.toContain('but the exact turnout was published');
    s.clock.set(new Date(drawnAt.getTime() + 2 * 60_000));
    const page = (await request(s.app).get(`/groups/${e.groupId}/ledger`).expect(200)).text;
    expect(page).toContain('Tenants association');
    expect(page).toContain('(not published)');
    expect(page).toContain('ε = 2 in total'); // how: 1 + 1
    expect(page).toContain('not protected: at least one result published its exact turnout');
    expect(page).toContain('Theorem 3.16');
    // Times in the style every other page uses ("Fri, 4 Dec 2026, 13:05 (UTC)"), never a raw ISO date.
    expect(page).not.toMatch(/>\d{4}-\d{2}-\d{2} \d{2}:\d{2} UTC</);
    expect(page).toMatch(/<time datetime="[^"]+">[A-Z][a-z]{2}, \d{1,2} [A-Z][a-z]{2} \d{4}, \d{2}:\d{2} \(UTC\)<\/time>/);
    // The published statement carries the totals at its draw, withheld draw included.
    const st = JSON.parse((await request(s.app).get(`/results/${p.id}/statement.json`).expect(200)).text).statement;
    // Whether: the add/remove draw's 0.5 and the replace-one draw's ε/2 = 0.5.
    expect(st.ledger).toMatchObject({ draws: 2, howVotedEpsilon: '2', whetherVotedEpsilon: '1', exactTurnoutReleases: 1 });
    // Publishing the withheld result later changes no charge.
    await publishResult(s.ctx, { electionId: e.id, organiserId: s.organiserId });
    expect(await ledgerRows(s, e.groupId!)).toEqual(after);
  });

  it("an election reset behind the app's back cannot be drawn and signed a second time", async () => {
    const d = await s.decided([[0], [1], [2]], { memberGroup: 'Allotment holders' }, false);
    const before = await s.ctx.knex('statements').where({ election_id: d.f.id }).select('draw_sequence', 'canonical');
    // A database operator puts the election back to "closed" to get another draw.
    await s.ctx
      .knex('elections')
      .where({ id: d.f.id })
      .update({ state: 'closed', result: null, tallied_at: null, ballots_counted: null, result_visible_at: null, publish_due_at: null });
    await expect(tallyFixture(s.ctx, d.f, false)).rejects.toBeInstanceOf(AlreadyTallied);
    expect(await s.ctx.knex('statements').where({ election_id: d.f.id }).select('draw_sequence', 'canonical')).toEqual(before);
    expect(Number((await s.ctx.knex('privacy_ledger').where({ election_id: d.f.id }).count({ n: '*' }).first())!.n)).toBe(1);
  });

  it('refuses to open an election that would pass the annual budget, unless the configuration allows it', async () => {
    const group = 'Rowing club members';
    await s.decided([[0]], { memberGroup: group, epsilon: '4' });
    s.clock.advance(30 * DAY);
    await s.decided([[1]], { memberGroup: group, epsilon: '4' });
    s.clock.advance(30 * DAY);
    // 8 spent, one more at ε = 2 reaches the budget of 10 exactly: allowed, and now pending.
    const fits = await createDraft(s.ctx, s.organiserId, { memberGroup: group, epsilon: '2' });
    await openFixture(s.ctx, fits);
    // Spent 8 + pending 2 + 0.01 passes 10.
    const over = await createDraft(s.ctx, s.organiserId, { memberGroup: group, epsilon: '0.01' });
    const attempt = openElection(s.ctx, { electionId: over.id, organiserId: s.organiserId, mode: 'now' });
    await expect(attempt).rejects.toBeInstanceOf(OverBudget);
    await expect(attempt).rejects.toThrow(/ε = 10.01 .* annual budget of ε = 10/);
    expect((await findElection(s.ctx.knex, over.id))!.state).toBe('draft');

    // The organiser sees the running total and the warning while setting the election up.
    const me = await s.ctx.knex('organisers').first('email');
    const agent = request.agent(s.app);
    const token = await csrfFrom(agent, '/organise/sign-in');
    await agent.post('/organise/sign-in').type('form').send({ _csrf: token, email: me.email, password: FIXTURE_PASSWORD }).expect(303);
    const form = (await agent.get(`/organise/elections/${over.id}/edit`).expect(200)).text;
    expect(form).toContain('has spent ε = 8 for how members voted over the last 12 months');
    expect(form).toContain('it would reach ε = 10.01');
    expect(form).toContain('This election would pass the group’s annual budget.');
    // The ledger sits under "More settings", which opens by itself to show it (issue 22 item 3).
    expect(form).toContain('<details class="more-settings" id="more-settings" open>');
    expect(form).toContain('Opened because this election would pass the member group’s annual privacy budget');
    const small = await createDraft(s.ctx, s.organiserId, { memberGroup: 'Choir', epsilon: '0.5' });
    const folded = (await agent.get(`/organise/elections/${small.id}/edit`).expect(200)).text;
    expect(folded).toContain('<details class="more-settings" id="more-settings">');

    // Another group is not affected; and an instance configured to allow it opens with the total on record.
    const other = await createDraft(s.ctx, s.organiserId, { memberGroup: 'Choir', epsilon: '4' });
    await openFixture(s.ctx, other);
    await openElection(
      { ...s.ctx, ledgerPolicy: { annualBudget: '10', allowOverBudget: true } },
      { electionId: over.id, organiserId: s.organiserId, mode: 'now' },
    );
    expect((await findElection(s.ctx.knex, over.id))!.state).toBe('open');
  });
});
