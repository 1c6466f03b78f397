import crypto from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Agent } from 'supertest';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testApp } from '../../helpers/app.ts';
import { testClock } from '../../helpers/context.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { issueCodes } from '../../../src/elections/issueCodes.ts';
import { openElection } from '../../../src/elections/openElection.ts';
import { closeElection } from '../../../src/elections/closeElection.ts';
import { draftElection, electionForm, encode, makeOrganiser, organiseContext, PASSPHRASE, PASSWORD, signedIn, tokenIn } from './organiseSupport.ts';

const HOUR = 3600_000;

/**
 * Every organiser route, GET and POST, tried by one organiser against another's elections and
 * accounts: each answers exactly as for a missing election (or, for account routes, the same
 * refusal whatever the target), and nothing in the database changes.
 */
type Target = 'draft' | 'open' | 'closed';
interface Row {
  method: 'GET' | 'POST';
  path: string; // :id is the election, :oid another organiser
  on?: Target[];
  fields?: (t: { victim: { id: string; email: string }; attacker: { id: string; email: string } }) => Record<string, string | string[]>;
}

/** The page's main content: what a refusal says, without the per-page token in the header. */
const mainOf = (html: string) => /<main[\s\S]*<\/main>/.exec(html)?.[0] ?? html;

const ALL: Target[] = ['draft', 'open', 'closed'];
const ELECTION_ROUTES: Row[] = [
  { method: 'GET', path: '/organise/elections/:id' },
  { method: 'GET', path: '/organise/elections/:id/edit' },
  { method: 'POST', path: '/organise/elections/:id/edit', fields: () => electionForm({ title: 'Renamed by another organiser' }) },
  { method: 'POST', path: '/organise/elections/:id/guidance', fields: () => electionForm() },
  { method: 'GET', path: '/organise/elections/:id/delete' },
  { method: 'POST', path: '/organise/elections/:id/delete' },
  { method: 'GET', path: '/organise/elections/:id/closing' },
  { method: 'POST', path: '/organise/elections/:id/closing', fields: () => ({ closesAt: '2026-06-20T18:00' }) },
  { method: 'GET', path: '/organise/elections/:id/wording' },
  { method: 'POST', path: '/organise/elections/:id/wording', fields: () => ({ description: 'Rewritten by another organiser' }) },
  { method: 'GET', path: '/organise/elections/:id/sharing' },
  { method: 'POST', path: '/organise/elections/:id/sharing', fields: ({ attacker }) => ({ email: attacker.email }) },
  { method: 'POST', path: '/organise/elections/:id/sharing/remove', fields: ({ victim }) => ({ organiserId: victim.id }) },
  { method: 'GET', path: '/organise/elections/:id/copy' },
  {
    method: 'POST',
    path: '/organise/elections/:id/copy',
    fields: () => ({ passphrase: 'a copy made by another organiser', passphraseAgain: 'a copy made by another organiser' }),
  },
  { method: 'GET', path: '/organise/elections/:id/codes' },
  { method: 'POST', path: '/organise/elections/:id/codes', fields: () => ({ count: '5', format: 'screen' }) },
  { method: 'POST', path: '/organise/elections/:id/codes/csv', fields: () => ({ batch: 'x', count: '5' }) },
  { method: 'POST', path: '/organise/elections/:id/codes/revoke', fields: () => ({ code: 'ABCD-EFGH-JKMN-PQRS' }) },
  { method: 'GET', path: '/organise/elections/:id/open' },
  { method: 'POST', path: '/organise/elections/:id/open', fields: () => ({ mode: 'now', confirm: 'yes' }) },
  { method: 'GET', path: '/organise/elections/:id/close' },
  { method: 'POST', path: '/organise/elections/:id/close', fields: () => ({ confirm: 'yes' }) },
  { method: 'GET', path: '/organise/elections/:id/tally' },
  { method: 'POST', path: '/organise/elections/:id/tally', fields: () => ({ passphrase: PASSPHRASE }) },
  { method: 'GET', path: '/organise/elections/:id/publish' },
  { method: 'POST', path: '/organise/elections/:id/publish', fields: () => ({ confirm: 'yes' }) },
];

const ACCOUNT_ROUTES: Row[] = [
  { method: 'GET', path: '/organise/organisers' },
  { method: 'POST', path: '/organise/organisers', fields: () => ({ email: 'planted@club.example', password: PASSWORD, passwordAgain: PASSWORD }) },
  { method: 'GET', path: '/organise/organisers/:oid/remove' },
  { method: 'POST', path: '/organise/organisers/:oid/remove' },
  { method: 'GET', path: '/organise/organisers/:oid/password' },
  {
    method: 'POST',
    path: '/organise/organisers/:oid/password',
    fields: () => ({ password: 'taken over password', passwordAgain: 'taken over password' }),
  },
];

describe.each(engines)('one organiser against another [%s]', (engine) => {
  let db: TestDatabase;
  let ctx: UseCaseContext;
  const clock = testClock('2026-06-01T09:00:00Z');
  let app: ReturnType<typeof testApp>;
  let admin: { id: string; email: string };
  let victim: { id: string; email: string };
  let attacker: { id: string; email: string };
  let attackerAgent: Agent;
  let adminAgent: Agent;
  const elections: Record<Target, string> = { draft: '', open: '', closed: '' };
  const adminElections: Record<Target, string> = { draft: '', open: '', closed: '' };

  async function threeElections(owner: string, into: Record<Target, string>) {
    into.draft = await draftElection(ctx, owner, { title: 'Draft of the boat name' });
    for (const t of ['open', 'closed'] as const) {
      const id = await draftElection(ctx, owner, { opensAt: clock.now(), closesAt: new Date(clock.now().getTime() + 48 * HOUR) });
      await issueCodes(ctx, { electionId: id, organiserId: owner, count: 3 });
      await openElection(ctx, { electionId: id, organiserId: owner, mode: 'now' });
      if (t === 'closed') await closeElection(ctx, { electionId: id, organiserId: owner });
      into[t] = id;
    }
  }

  beforeAll(async () => {
    db = await freshDatabase(engine);
    ctx = organiseContext(db, clock);
    app = testApp(ctx);
    admin = await makeOrganiser(ctx, 'secretary@club.example'); // first run: the administrator
    victim = await makeOrganiser(ctx, 'captain@club.example');
    attacker = await makeOrganiser(ctx, 'rival@other-club.example');
    await threeElections(victim.id, elections);
    await threeElections(admin.id, adminElections);
    attackerAgent = await signedIn(app, attacker.email);
    adminAgent = await signedIn(app, admin.email);
  });
  afterAll(async () => {
    await db.dispose();
  });

  /** Everything a refused request must leave as it was. */
  async function snapshot() {
    const [elections, shares, organisers, codes, ballots, audit, queue] = await Promise.all([
      db.knex('elections').orderBy('id').select(),
      db.knex('election_organisers').orderBy(['election_id', 'organiser_id']).select(),
      db.knex('organisers').orderBy('id').select('id', 'email', 'password_hash', 'removed_at', 'admin'),
      db.knex('ballot_codes').count({ n: '*' }).first(),
      db.knex('ballots').count({ n: '*' }).first(),
      db.knex('audit_events').whereNot('action', 'signed-in').count({ n: '*' }).first(),
      db
        .knex('tally_jobs')
        .count({ n: '*' })
        .first()
        .catch(() => null),
    ]);
    return JSON.stringify({ elections, shares, organisers, codes, ballots, audit, queue });
  }

  /** A fresh session-bound token from the agent's own page, so only authorisation can refuse. */
  async function send(agent: Agent, method: 'GET' | 'POST', path: string, fields: Record<string, string | string[]>) {
    if (method === 'GET') return agent.get(path);
    const token = tokenIn((await agent.get('/organise/account')).text);
    return agent
      .post(path)
      .type('form')
      .send(encode({ ...fields, _csrf: token }));
  }

  const electionCases = ELECTION_ROUTES.flatMap((r) => (r.on ?? ALL).map((t) => [`${r.method} ${r.path} (${t})`, r, t] as const));

  it.each(electionCases)('a non-administrator: %s answers as for a missing election, and changes nothing', async (_name, row, t) => {
    const fields = row.fields?.({ victim, attacker }) ?? {};
    const missing = await send(attackerAgent, row.method, row.path.replace(':id', crypto.randomUUID()), fields);
    const before = await snapshot();
    const res = await send(attackerAgent, row.method, row.path.replace(':id', elections[t]), fields);
    expect(res.status).toBe(missing.status);
    expect(res.status).toBe(404);
    expect(mainOf(res.text)).toBe(mainOf(missing.text));
    expect(res.text).not.toContain('Draft of the boat name');
    expect(await snapshot()).toBe(before);
  });

  it.each(electionCases)('an administrator: %s of another organiser’s election answers as for a missing one', async (_name, row, t) => {
    const fields = row.fields?.({ victim, attacker: admin }) ?? {};
    const before = await snapshot();
    const res = await send(adminAgent, row.method, row.path.replace(':id', elections[t]), fields);
    expect(res.status).toBe(404);
    expect(await snapshot()).toBe(before);
  });

  it.each(ACCOUNT_ROUTES.map((r) => [`${r.method} ${r.path}`, r] as const))(
    'a non-administrator: %s is refused the same whatever the target, and changes nothing',
    async (_name, row) => {
      const fields = row.fields?.({ victim, attacker }) ?? {};
      const missing = await send(attackerAgent, row.method, row.path.replace(':oid', crypto.randomUUID()), fields);
      for (const target of [victim.id, admin.id]) {
        const before = await snapshot();
        const res = await send(attackerAgent, row.method, row.path.replace(':oid', target), fields);
        expect(res.status).toBe(missing.status);
        expect([403, 404]).toContain(res.status);
        expect(res.text).not.toContain(victim.email);
        expect(await snapshot()).toBe(before);
      }
    },
  );

  it('nobody sets another organiser’s password from the web, administrators included, so nobody signs in as another', async () => {
    for (const [agent, target] of [
      [attackerAgent, victim.id],
      [adminAgent, victim.id],
    ] as const) {
      const before = await snapshot();
      const res = await send(agent, 'POST', `/organise/organisers/${target}/password`, {
        password: 'taken over password',
        passwordAgain: 'taken over password',
      });
      expect(res.status).toBe(404);
      expect(await snapshot()).toBe(before);
    }
    await expect(signedIn(app, victim.email)).resolves.toBeDefined(); // their own password still works
  });

  it('an organiser’s list shows only their own elections; the Organisers link only to administrators', async () => {
    const mine = await attackerAgent.get('/organise');
    expect(mine.status).toBe(200);
    for (const id of [...Object.values(elections), ...Object.values(adminElections)]) expect(mine.text).not.toContain(id);
    expect(mine.text).not.toContain('href="/organise/organisers"');
    expect((await adminAgent.get('/organise')).text).toContain('href="/organise/organisers"');
  });

  it('an administrator adds and removes ordinary organisers, but not another administrator nor one who alone runs an election', async () => {
    const add = await send(adminAgent, 'POST', '/organise/organisers', { email: 'bosun@club.example', password: PASSWORD, passwordAgain: PASSWORD });
    expect(add.status).toBe(303);
    const bosun = await db.knex('organisers').where({ email: 'bosun@club.example' }).first('id', 'admin');
    expect(bosun.admin).toBe(false);
    const runsAlone = await send(adminAgent, 'POST', `/organise/organisers/${victim.id}/remove`, {});
    expect(runsAlone.status).toBe(409);
    expect(runsAlone.text).toContain('alone runs 3 elections');
    const removed = await send(adminAgent, 'POST', `/organise/organisers/${bosun.id}/remove`, {});
    expect(removed.status).toBe(303);
    // The administrator gained no election by removing someone.
    expect(await db.knex('election_organisers').where({ organiser_id: admin.id }).select()).toEqual([]);
  });
});
