import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Agent } from 'supertest';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testApp } from '../../helpers/app.ts';
import { testClock } from '../../helpers/context.ts';
import { findElection } from '../../../src/elections/electionRepo.ts';
import { shareElection } from '../../../src/elections/shareElection.ts';
import { addMember, createRoster } from '../../../src/rosters/manageRosters.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { createElectionViaForm, electionForm, makeOrganiser, organiseContext, postForm, signedIn } from './organiseSupport.ts';

/** The electorate choice on the election form: printed codes, or one of the organiser's rosters. */
describe.each(engines)('election form: who votes [%s]', (engine) => {
  let db: TestDatabase;
  let ctx: UseCaseContext;
  let mine: Agent;
  let theirs: Agent;
  let me: { id: string; email: string };
  let them: { id: string; email: string };
  let myRoster: string;
  let theirRoster: string;
  beforeAll(async () => {
    db = await freshDatabase(engine);
    ctx = organiseContext(db, testClock('2026-06-01T09:00:00Z'));
    const app = testApp(ctx);
    me = await makeOrganiser(ctx, 'captain@rowing.example');
    them = await makeOrganiser(ctx, 'secretary@tenants.example');
    mine = await signedIn(app, me.email);
    theirs = await signedIn(app, them.email);
    myRoster = (await createRoster(ctx, { organiserId: me.id, name: 'Rowing club <crew>' })).rosterId;
    await addMember(ctx, { organiserId: me.id, rosterId: myRoster, email: 'bow@rowing.example', name: 'Bow' });
    await addMember(ctx, { organiserId: me.id, rosterId: myRoster, email: 'stroke@rowing.example', name: '' });
    theirRoster = (await createRoster(ctx, { organiserId: them.id, name: 'Tenants of block C' })).rosterId;
  });
  afterAll(async () => {
    await db.dispose();
  });

  it('offers printed codes (checked) and only the organiser’s own rosters, names escaped', async () => {
    const res = await mine.get('/organise/elections/new');
    expect(res.status).toBe(200);
    expect(res.text).toMatch(/id="electorate-printed" name="electorate" value="printed" checked/);
    expect(res.text).toContain(`value="${myRoster}"`);
    expect(res.text).toContain('Rowing club &lt;crew&gt;” (2 members)');
    expect(res.text).not.toContain(theirRoster);
    expect(res.text).not.toContain('Tenants of block C');
  });

  it('says where rosters are made when the organiser has none', async () => {
    const other = await makeOrganiser(ctx, 'cox@rowing.example');
    const agent = await signedIn(testApp(ctx), other.email);
    const res = await agent.get('/organise/elections/new');
    expect(res.text).toContain('You have no rosters yet');
    expect(res.text).not.toContain(myRoster);
  });

  it('stores printed codes by default and the chosen roster when one is picked', async () => {
    const printed = await createElectionViaForm(mine);
    expect((await findElection(db.knex, printed))!.rosterId).toBeNull();
    const roster = await createElectionViaForm(mine, { electorate: myRoster });
    expect((await findElection(db.knex, roster))!.rosterId).toBe(myRoster);
    const page = await mine.get(`/organise/elections/${roster}/edit`);
    expect(page.text).toMatch(new RegExp(`id="electorate-${myRoster}" name="electorate" value="${myRoster}" checked`));
  });

  it('refuses another organiser’s roster exactly as a missing id or a malformed one, keeping what was typed', async () => {
    const answers: string[] = [];
    for (const electorate of [theirRoster, '00000000-0000-4000-8000-000000000000', 'not-a-roster']) {
      const res = await postForm(mine, '/organise/elections/new', '/organise/elections/new', electionForm({ electorate, title: 'Boat name, again' }));
      expect(res.status).toBe(400);
      expect(res.text).toContain('Choose one of your rosters, or printed codes.');
      expect(res.text).toContain('href="#electorate-printed"');
      expect(res.text).toContain('value="Boat name, again"');
      expect(res.text).not.toContain('Tenants of block C');
      // The page differs only in the CSRF token.
      answers.push(res.text.replace(/name="_csrf" value="[^"]+"/g, ''));
    }
    expect(new Set(answers).size).toBe(1);
    expect(await db.knex('elections').where({ roster_id: theirRoster }).first('id')).toBeUndefined();
  });

  it('an edit can switch to printed codes and back; another organiser’s roster is refused on edit too', async () => {
    const id = await createElectionViaForm(mine, { electorate: myRoster });
    const edit = (fields: Record<string, string>) =>
      postForm(
        mine,
        `/organise/elections/${id}/edit`,
        `/organise/elections/${id}/edit`,
        electionForm({ ...fields, passphrase: '', passphraseAgain: '' }),
      );
    expect((await edit({ electorate: 'printed' })).status).toBe(303);
    expect((await findElection(db.knex, id))!.rosterId).toBeNull();
    expect((await edit({ electorate: theirRoster })).status).toBe(400);
    expect((await findElection(db.knex, id))!.rosterId).toBeNull();
    expect((await edit({ electorate: myRoster })).status).toBe(303);
    expect((await findElection(db.knex, id))!.rosterId).toBe(myRoster);
  });

  it('an organiser the election is shared with keeps its roster when saving, but cannot pick it anew', async () => {
    const id = await createElectionViaForm(mine, { electorate: myRoster });
    await shareElection(ctx, { electionId: id, organiserId: me.id, email: them.email });
    const page = await theirs.get(`/organise/elections/${id}/edit`);
    expect(page.status).toBe(200);
    expect(page.text).toMatch(new RegExp(`value="${myRoster}" checked`));
    const save = (electorate: string) =>
      postForm(
        theirs,
        `/organise/elections/${id}/edit`,
        `/organise/elections/${id}/edit`,
        electionForm({ electorate, passphrase: '', passphraseAgain: '' }),
      );
    expect((await save(myRoster)).status).toBe(303);
    expect((await findElection(db.knex, id))!.rosterId).toBe(myRoster);
    expect((await save('printed')).status).toBe(303);
    // Having let it go, they cannot put a roster that is not theirs back.
    expect((await save(myRoster)).status).toBe(400);
    expect((await findElection(db.knex, id))!.rosterId).toBeNull();
    // A new election of theirs cannot name it either.
    const fresh = await postForm(theirs, '/organise/elections/new', '/organise/elections/new', electionForm({ electorate: myRoster }));
    expect(fresh.status).toBe(400);
  });
});
