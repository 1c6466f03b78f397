import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Agent } from 'supertest';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testApp } from '../../helpers/app.ts';
import { testClock } from '../../helpers/context.ts';
import { findElection } from '../../../src/elections/electionRepo.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { migrateLatest, rollbackAll } from '../../../src/db/migrate.ts';
import { createElectionViaForm, electionForm, makeOrganiser, organiseContext, postForm, signedIn } from './organiseSupport.ts';

/**
 * The election form's quorum (issue 20 item 3): optional and off by default, a whole number of ballots checked with
 * zod in the draft rules, stored with the draft; before opening the form says what the result will release.
 */
describe.each(engines)('election form: quorum [%s]', (engine) => {
  let db: TestDatabase;
  let ctx: UseCaseContext;
  const clock = testClock('2026-06-01T09:00:00Z');
  let agent: Agent;
  let app: ReturnType<typeof testApp>;

  beforeAll(async () => {
    db = await freshDatabase(engine);
    ctx = organiseContext(db, clock);
    app = testApp(ctx);
    const me = await makeOrganiser(ctx, 'secretary@rowing.example');
    agent = await signedIn(app, me.email);
  });
  afterAll(async () => {
    await db.dispose();
  });

  it('is off by default, and the form says before opening exactly what a quorum would release', async () => {
    const res = await agent.get('/organise/elections/new');
    expect(res.text).toContain('<legend>Quorum</legend>');
    expect(res.text).toContain('id="quorum" name="quorum" value=""');
    expect(res.text).toContain('“quorum met: yes” or “quorum met: no”');
    expect(res.text).toContain('it is not protected by ε');
    expect(res.text).toContain('anyone who knows whether\n    every other member voted would learn whether that member did');
    expect(res.text).toContain('The draw runs either way');
    expect(res.text).toContain('no live turnout · no quorum</span>');
    const id = await createElectionViaForm(agent);
    expect((await findElection(ctx.knex, id))?.quorum).toBeNull();
  });

  it('set: stored with the draft, shown on the edit form and the dashboard, and cleared by leaving it empty', async () => {
    const id = await createElectionViaForm(agent, { quorum: ' 25 ' });
    expect((await findElection(ctx.knex, id))?.quorum).toBe(25);
    const edit = (await agent.get(`/organise/elections/${id}/edit`)).text;
    expect(edit).toContain('id="quorum" name="quorum" value="25"');
    expect(edit).toContain('quorum of 25 (an exact yes or no released)</span>');
    const dash = (await agent.get(`/organise/elections/${id}`)).text;
    expect(dash).toContain('25 ballots: the result will say exactly whether it was met (one bit, not protected by ε); the draw runs either way');
    const saved = await postForm(
      agent,
      `/organise/elections/${id}/edit`,
      `/organise/elections/${id}/edit`,
      electionForm({ quorum: '', passphrase: '', passphraseAgain: '' }),
    );
    expect(saved.status).toBe(303);
    expect((await findElection(ctx.knex, id))?.quorum).toBeNull();
  });

  it('refuses a quorum that is not a whole number of at least 1, keeping what was typed', async () => {
    for (const [typed, message] of [
      ['twenty', 'Give the quorum as a whole number of ballots, such as 25, or leave it empty for none.'],
      ['2.5', 'Give the quorum as a whole number of ballots, such as 25, or leave it empty for none.'],
      ['0', 'A quorum is at least 1 ballot. Leave it empty for no quorum.'],
      ['2000000', 'We support up to 1,000,000 voters.'],
    ] as const) {
      const res = await postForm(agent, '/organise/elections/new', '/organise/elections/new', electionForm({ quorum: typed }));
      expect(res.status, typed).toBe(400);
      expect(res.text, typed).toContain(message);
      expect(res.text, typed).toContain(`id="quorum" name="quorum" value="${typed}"`);
      // The quorum sits under "More settings", which opens by itself on its error.
      expect(res.text, typed).toContain('<details class="more-settings" id="more-settings" open>');
    }
  });

  it('its migration goes down and up again, and the column refuses a quorum below 1', async () => {
    const other = await freshDatabase(engine);
    try {
      await rollbackAll(other.knex);
      await migrateLatest(other.knex);
      expect(await other.knex.schema.hasColumn('elections', 'quorum')).toBe(true);
    } finally {
      await other.dispose();
    }
    const id = await createElectionViaForm(agent);
    await expect(ctx.knex('elections').where({ id }).update({ quorum: 0 })).rejects.toThrow(/elections_quorum_check/);
  });
});
