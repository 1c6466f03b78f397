import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Agent } from 'supertest';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testApp } from '../../helpers/app.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { csrfFrom, makeOrganiser, organiseContext, postForm, signedIn } from './organiseSupport.ts';

const GOOD = ['email,name', 'ann.oarsby@rowing.example,Ann Oarsby', 'Ben.Stroke@Rowing.example,', '', '"cox@rowing.example","Cox, the"'].join('\n');

describe.each(engines)('member rosters through their pages [%s]', (engine) => {
  let db: TestDatabase;
  let ctx: UseCaseContext;
  let app: ReturnType<typeof testApp>;
  let me: { id: string; email: string };
  let other: { id: string; email: string };
  let agent: Agent;
  let otherAgent: Agent;

  beforeAll(async () => {
    db = await freshDatabase(engine);
    ctx = organiseContext(db);
    app = testApp(ctx);
    me = await makeOrganiser(ctx, 'secretary@rowing.example');
    other = await makeOrganiser(ctx, 'chair@tenants.example');
    agent = await signedIn(app, me.email);
    otherAgent = await signedIn(app, other.email);
  });
  afterAll(() => db.dispose());

  async function newRoster(name: string): Promise<string> {
    const res = await postForm(agent, '/organise/rosters', '/organise/rosters', { name });
    expect(res.status).toBe(303);
    return /\/organise\/rosters\/([0-9a-f-]{36})$/.exec(String(res.headers.location))![1]!;
  }
  const members = (rosterId: string) =>
    db.knex('roster_members').where({ roster_id: rosterId }).orderBy('email_canonical').select('email', 'display_name');

  it('imports a good file with or without a header, keeping addresses as entered and names optional', async () => {
    const id = await newRoster('Rowing club members');
    const page = `/organise/rosters/${id}`;
    const res = await postForm(agent, page, `${page}/import`, { csv: GOOD });
    expect(res.status).toBe(303);
    expect(res.headers.location).toBe(`${page}?imported=3`);
    expect(await members(id)).toEqual([
      { email: 'ann.oarsby@rowing.example', display_name: 'Ann Oarsby' },
      { email: 'Ben.Stroke@Rowing.example', display_name: null },
      { email: 'cox@rowing.example', display_name: 'Cox, the' },
    ]);
    // No header row: the first column is the address.
    const again = await postForm(agent, page, `${page}/import`, { csv: 'dee@rowing.example,Dee\neve@rowing.example' });
    expect(again.headers.location).toBe(`${page}?imported=2`);
    const shown = await agent.get(page);
    expect(shown.text).toContain('5 members');
    expect(shown.text).toContain('Ben.Stroke@Rowing.example');
    expect(shown.headers['cache-control']).toBe('no-store');
  });

  it('promises the organiser nothing the site does not do: codes are mailed at opening, and deleting keeps nothing', async () => {
    const list = await agent.get('/organise/rosters');
    // test/integration/mail/invitations.test.ts shows the mail going out and no code reaching the organiser.
    expect(list.text).toContain('sends each member their own ballot code by email when it opens; you never see the codes');
    const id = await newRoster('Boat shed volunteers');
    const del = await agent.get(`/organise/rosters/${id}/delete`);
    expect(del.status).toBe(200);
    expect(del.text).toContain('Every address and name on this roster will be deleted.');
    expect(del.text).not.toMatch(/keyed hashes/);
  });

  it('lists every bad row, imports nothing, and keeps the pasted text', async () => {
    const id = await newRoster('Tenants');
    const page = `/organise/rosters/${id}`;
    await postForm(agent, page, `${page}/members`, { email: 'Flat1@Tenants.example', memberName: '' });
    const csv = [
      'good@tenants.example,Good',
      'not-an-address,Nobody',
      'GOOD@tenants.example,Again', // the same address as line 1, other case
      'flat1@tenants.example', // already on the roster, other case
      'x@tenants.example,' + 'n'.repeat(121),
      'fine@tenants.example',
    ].join('\n');
    const res = await postForm(agent, page, `${page}/import`, { csv });
    expect(res.status).toBe(400);
    expect(res.text).toContain('Nothing was imported: 4 rows need correcting first.');
    expect(res.text).toContain('Line 2: That is not an email address like name@example.org.');
    expect(res.text).toContain('Line 3: GOOD@tenants.example is already on line 1 of this file');
    expect(res.text).toContain('Line 4: flat1@tenants.example is already on this roster.');
    expect(res.text).toContain('Line 5: Keep the name to 120 characters or fewer.');
    expect(res.text).not.toContain('Line 1:');
    expect(res.text).not.toContain('Line 6:');
    // The textarea holds exactly what was sent (escaped).
    expect(res.text).toContain('good@tenants.example,Good\nnot-an-address,Nobody');
    expect(await members(id)).toEqual([{ email: 'Flat1@Tenants.example', display_name: null }]);
    // A syntax error in the CSV is named by line, too.
    const broken = await postForm(agent, page, `${page}/import`, { csv: 'a@tenants.example\n"b@tenants.example,B' });
    expect(broken.status).toBe(400);
    expect(broken.text).toMatch(/Line \d: This line is not valid CSV/);
    expect(await members(id)).toHaveLength(1);
  });

  it('adds and removes single members, refusing a case-insensitive duplicate and a bad address', async () => {
    const id = await newRoster('Single adds');
    const page = `/organise/rosters/${id}`;
    expect((await postForm(agent, page, `${page}/members`, { email: 'Stroke@Rowing.example', memberName: 'Stroke' })).status).toBe(303);
    const dup = await postForm(agent, page, `${page}/members`, { email: ' stroke@ROWING.example ', memberName: '' });
    expect(dup.status).toBe(400);
    expect(dup.text).toContain('That address is already on this roster');
    const bad = await postForm(agent, page, `${page}/members`, { email: 'stroke at rowing', memberName: 'Keep me' });
    expect(bad.status).toBe(400);
    expect(bad.text).toContain('value="Keep me"');
    const injected = await postForm(agent, page, `${page}/members`, { email: 'bow@rowing.example', memberName: 'Bow\r\nBcc: all@rowing.example' });
    expect(injected.status).toBe(400);
    expect(injected.text).toContain('A name cannot hold control characters or line breaks.');
    const row = await db.knex('roster_members').where({ roster_id: id }).first('id');
    expect((await postForm(agent, page, `${page}/members/${row.id}/remove`, {})).status).toBe(303);
    expect(await members(id)).toEqual([]);
  });

  it('renames and deletes a roster, and deleting it deletes every address', async () => {
    const id = await newRoster('To rename');
    const page = `/organise/rosters/${id}`;
    await postForm(agent, page, `${page}/import`, { csv: 'gone1@rowing.example\ngone2@rowing.example' });
    expect((await postForm(agent, page, `${page}/name`, { name: 'Renamed roster' })).status).toBe(303);
    expect((await agent.get('/organise/rosters')).text).toContain('Renamed roster');
    const res = await postForm(agent, `${page}/delete`, `${page}/delete`, {});
    expect(res.headers.location).toBe('/organise/rosters?deleted=1');
    expect(await db.knex('rosters').where({ id }).first()).toBeUndefined();
    const left = await db.knex('roster_members').where('email_canonical', 'like', 'gone%').select('id');
    expect(left).toEqual([]);
    expect((await agent.get(page)).status).toBe(404);
  });

  it('another organiser can neither see nor use a roster: every route answers 404 and changes nothing', async () => {
    const id = await newRoster('Private roster');
    const page = `/organise/rosters/${id}`;
    await postForm(agent, page, `${page}/members`, { email: 'private@rowing.example', memberName: 'Private' });
    const member = await db.knex('roster_members').where({ roster_id: id }).first('id');
    expect((await otherAgent.get('/organise/rosters')).text).not.toContain('Private roster');
    const token = await csrfFrom(otherAgent, '/organise/rosters');
    const routes: [string, string, Record<string, string>][] = [
      ['get', page, {}],
      ['get', `${page}/delete`, {}],
      ['post', `${page}/name`, { name: 'Taken over' }],
      ['post', `${page}/members`, { email: 'intruder@tenants.example', memberName: '' }],
      ['post', `${page}/members/${member.id}/remove`, {}],
      ['post', `${page}/import`, { csv: 'intruder2@tenants.example' }],
      ['post', `${page}/sharing`, { shareEmail: other.email }],
      ['post', `${page}/delete`, {}],
    ];
    for (const [method, path, fields] of routes) {
      const res =
        method === 'get'
          ? await otherAgent.get(path)
          : await otherAgent
              .post(path)
              .type('form')
              .send({ ...fields, _csrf: token });
      expect([path, res.status]).toEqual([path, 404]);
      expect(res.text).not.toContain('private@rowing.example');
    }
    expect((await db.knex('rosters').where({ id }).first('name')).name).toBe('Private roster');
    expect(await members(id)).toEqual([{ email: 'private@rowing.example', display_name: 'Private' }]);

    // Once shared, the other organiser sees it.
    expect((await postForm(agent, page, `${page}/sharing`, { shareEmail: other.email })).status).toBe(303);
    expect((await otherAgent.get(page)).text).toContain('private@rowing.example');
  });
});
