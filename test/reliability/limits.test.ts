import crypto from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { addOrganiser } from '../../src/accounts/addOrganiser.ts';
import { closeElection } from '../../src/elections/closeElection.ts';
import { migrateLatest } from '../../src/db/migrate.ts';
import { FIXTURE_PASSPHRASE, FIXTURE_PASSWORD, createOrganiser, openElectionFixture } from '../helpers/fixtures.ts';
import { csrfFrom } from '../helpers/csrf.ts';
import type { RunningServer } from '../helpers/server.ts';
import { PG_URL, contextFor, keyDirOf, launch, pgliteTarget, postgresTarget, record, sharedSecrets, type Target } from './_harness.ts';

/**
 * Attempt limits under bursts, and one organiser against another, on a real server process.
 * Addresses come through X-Forwarded-For from loopback (TRUST_PROXY). What src/web/middleware/limits.ts
 * documents: sign-ins are limited to 10 per (address, account) and 100 per account (a ceiling that
 * spares an address the owner signed in from before); tally passphrases to 10 per (address, election).
 * "Checked" is an answer from the check itself (401 wrong password, 403 wrong passphrase); 429 is refused unchecked.
 */
const targets = ['pglite', ...(PG_URL ? ['postgres'] : [])] as const;
const EMAIL_A = 'organiser@rowing.example';
const EMAIL_B = 'secretary@tenants.example';
const HOME = '198.51.100.20'; // where organiser A signs in from
const ATTACKER = '203.0.113.7';
const B_HOME = '198.51.100.44';
const SPREAD = Array.from({ length: 20 }, (_x, i) => `203.0.113.${100 + i}`);
const BURST = 100;

type Jar = Map<string, string>;
const header = (jar: Jar) => [...jar].map(([k, v]) => `${k}=${v}`).join('; ');
function keep(jar: Jar, res: Response) {
  for (const c of res.headers.getSetCookie?.() ?? []) {
    const pair = c.split(';')[0]!;
    const i = pair.indexOf('=');
    jar.set(pair.slice(0, i), pair.slice(i + 1));
  }
}
const mainOf = (html: string) => /<main[\s\S]*<\/main>/.exec(html)?.[0] ?? html;
const tally = (statuses: number[]) => statuses.reduce<Record<number, number>>((m, s) => ({ ...m, [s]: (m[s] ?? 0) + 1 }), {});

describe.each(targets)('attempt limits under bursts and organisers kept apart, real server [%s]', (engine) => {
  const secrets = sharedSecrets();
  let target: Target;
  let server: RunningServer;
  let openId: string; // A's open election
  let closedId: string; // A's closed election
  const figures = { requests: 0, accepted: 0, rejected: 0, serverErrors: 0, notes: [] as string[] };

  /** What a refused cross-account request must leave as it was (read with the server stopped: PGlite is the server's alone). */
  async function snapshot() {
    const db = target.open();
    try {
      const [elections, shares, codes, jobs, organisers] = await Promise.all([
        db.knex('elections').whereIn('id', [openId, closedId]).orderBy('id').select(),
        db.knex('election_organisers').whereIn('election_id', [openId, closedId]).orderBy(['election_id', 'organiser_id']).select(),
        db.knex('ballot_codes').whereIn('election_id', [openId, closedId]).count({ n: '*' }).first(),
        db
          .knex('tally_jobs')
          .count({ n: '*' })
          .first()
          .catch(() => null),
        db.knex('organisers').orderBy('id').select('id', 'email', 'removed_at', 'admin'),
      ]);
      return JSON.stringify({ elections, shares, codes, jobs, organisers });
    } finally {
      await db.close();
    }
  }
  let before = '';

  beforeAll(async () => {
    target = engine === 'postgres' ? await postgresTarget(secrets.env) : pgliteTarget(secrets.env);
    const db = target.open();
    try {
      await migrateLatest(db.knex);
      const ctx = contextFor(db, secrets.pepper, secrets.seed, keyDirOf(target));
      const a = await createOrganiser(ctx, EMAIL_A); // the first organiser: an administrator
      await addOrganiser(ctx, { organiserId: a, email: EMAIL_B, password: FIXTURE_PASSWORD });
      openId = (await openElectionFixture(ctx, a, { codes: 2 })).id;
      closedId = (await openElectionFixture(ctx, a, { codes: 2, title: 'Tenants’ association: the garden rota' })).id;
      await closeElection(ctx, { electionId: closedId, organiserId: a });
    } finally {
      await db.close();
    }
    before = await snapshot();
    server = await launch(target, { TRUST_PROXY: 'loopback' });
  });
  afterAll(async () => {
    await server?.stop();
    await target?.dispose();
  });

  const get = async (jar: Jar, address: string, path: string) => {
    const res = await fetch(server.url + path, { redirect: 'manual', headers: { cookie: header(jar), 'x-forwarded-for': address } });
    keep(jar, res);
    return { status: res.status, text: await res.text() };
  };
  /** `keepCookies` false for burst posts, so concurrent answers cannot trample one another's cookies. */
  const post = async (jar: Jar, address: string, path: string, fields: Record<string, string>, keepCookies = true) => {
    const res = await fetch(server.url + path, {
      method: 'POST',
      redirect: 'manual',
      headers: { 'content-type': 'application/x-www-form-urlencoded', cookie: header(jar), 'x-forwarded-for': address },
      body: new URLSearchParams(fields),
    });
    if (keepCookies) keep(jar, res);
    return { status: res.status, text: await res.text() };
  };
  const signInForm = async (address: string) => {
    const jar: Jar = new Map();
    const page = await get(jar, address, '/organise/sign-in');
    expect(page.status).toBe(200);
    return { jar, token: csrfFrom(page.text) };
  };
  const signIn = async (address: string, email: string, password: string) => {
    const { jar, token } = await signInForm(address);
    const res = await post(jar, address, '/organise/sign-in', { _csrf: token, email, password });
    return { jar, status: res.status };
  };
  const count = (statuses: number[], checked: number) => {
    figures.requests += statuses.length;
    figures.rejected += statuses.filter((s) => s === 429).length;
    figures.accepted += statuses.filter((s) => s === checked).length;
    figures.serverErrors += statuses.filter((s) => s >= 500).length;
  };

  it(`${BURST} concurrent wrong sign-ins for one account: at most 10 checked per address, 100 per account, and the owner still gets in`, async () => {
    // The owner signs in once from home: that address is then spared the account's ceiling.
    const first = await signIn(HOME, EMAIL_A, FIXTURE_PASSWORD);
    expect(first.status).toBe(303);
    await new Promise((r) => setTimeout(r, 1_000)); // the "signed in from here" row is written once the answer has gone

    // One address, 100 at once.
    const { jar, token } = await signInForm(ATTACKER);
    const burst = await Promise.all(
      Array.from({ length: BURST }, () =>
        post(jar, ATTACKER, '/organise/sign-in', { _csrf: token, email: EMAIL_A, password: 'not the password at all' }, false),
      ),
    );
    const one = burst.map((r) => r.status);
    count(one, 401);
    expect(
      one.every((s) => s === 401 || s === 429),
      JSON.stringify(tally(one)),
    ).toBe(true);
    expect(one.filter((s) => s === 401).length).toBeLessThanOrEqual(10);
    expect(one.filter((s) => s === 401).length).toBeGreaterThan(0);

    // Twenty addresses, 10 each at once: the account's ceiling of 100 binds them together.
    const forms = await Promise.all(SPREAD.map((a) => signInForm(a)));
    const spread = (
      await Promise.all(
        SPREAD.flatMap((a, i) =>
          Array.from({ length: 10 }, () =>
            post(forms[i]!.jar, a, '/organise/sign-in', { _csrf: forms[i]!.token, email: EMAIL_A, password: 'another wrong password' }, false),
          ),
        ),
      )
    ).map((r) => r.status);
    count(spread, 401);
    expect(
      spread.every((s) => s === 401 || s === 429),
      JSON.stringify(tally(spread)),
    ).toBe(true);
    const checked = one.filter((s) => s === 401).length + spread.filter((s) => s === 401).length;
    expect(checked).toBeLessThanOrEqual(100);
    expect(spread.filter((s) => s === 429).length).toBeGreaterThan(0);

    // A new address is held by the ceiling even with the right password; the owner's own address is not.
    const fresh = await signIn('192.0.2.9', EMAIL_A, FIXTURE_PASSWORD);
    const owner = await signIn(HOME, EMAIL_A, FIXTURE_PASSWORD);
    figures.notes.push(
      `sign-in: ${checked} of ${one.length + spread.length} wrong checked (1 address ${JSON.stringify(tally(one))}, 20 addresses ${JSON.stringify(tally(spread))}); owner from a known address ${owner.status}, right password from a new address ${fresh.status}`,
    );
    expect(fresh.status).toBe(429);
    expect(owner.status).toBe(303);
    expect((await get(owner.jar, HOME, '/organise')).status).toBe(200);
  });

  it(`${BURST} concurrent wrong tally passphrases on a closed election: at most 10 checked`, async () => {
    const a = await signIn(HOME, EMAIL_A, FIXTURE_PASSWORD);
    expect(a.status).toBe(303);
    const form = await get(a.jar, HOME, `/organise/elections/${closedId}/tally`);
    expect(form.status).toBe(200);
    const token = csrfFrom(form.text);
    const burst = (
      await Promise.all(
        Array.from({ length: BURST }, () =>
          post(a.jar, HOME, `/organise/elections/${closedId}/tally`, { _csrf: token, passphrase: 'a wrong tally passphrase' }, false),
        ),
      )
    ).map((r) => r.status);
    count(burst, 403);
    figures.notes.push(`passphrase: ${burst.filter((s) => s === 403).length} of ${burst.length} wrong checked ${JSON.stringify(tally(burst))}`);
    expect(
      burst.every((s) => s === 403 || s === 429),
      JSON.stringify(tally(burst)),
    ).toBe(true);
    expect(burst.filter((s) => s === 403).length).toBeLessThanOrEqual(10);
    expect(burst.filter((s) => s === 403).length).toBeGreaterThan(0);
    // Nothing was queued: the election still offers its unlock form.
    expect((await get(a.jar, HOME, `/organise/elections/${closedId}/tally`)).status).toBe(200);
  });

  it("an organiser signed in to account B gets the missing-election answer on account A's election routes, and nothing changes", async () => {
    const b = await signIn(B_HOME, EMAIL_B, FIXTURE_PASSWORD);
    expect(b.status).toBe(303);
    const missing = crypto.randomUUID();
    const routes: Array<['GET' | 'POST', string, Record<string, string>]> = [
      ['GET', '/organise/elections/:id', {}],
      ['GET', '/organise/elections/:id/codes', {}],
      ['POST', '/organise/elections/:id/codes', { count: '5', format: 'screen' }],
      ['POST', '/organise/elections/:id/close', { confirm: 'yes' }],
      ['GET', '/organise/elections/:id/tally', {}],
      ['POST', '/organise/elections/:id/tally', { passphrase: FIXTURE_PASSPHRASE }],
    ];
    const statuses: number[] = [];
    const mismatches: string[] = [];
    for (const id of [openId, closedId]) {
      for (const [method, path, fields] of routes) {
        const send = async (which: string) => {
          if (method === 'GET') return get(b.jar, B_HOME, path.replace(':id', which));
          const token = csrfFrom((await get(b.jar, B_HOME, '/organise/account')).text);
          return post(b.jar, B_HOME, path.replace(':id', which), { ...fields, _csrf: token });
        };
        const theirs = await send(id);
        const none = await send(missing);
        statuses.push(theirs.status);
        if (theirs.status !== none.status || mainOf(theirs.text) !== mainOf(none.text))
          mismatches.push(`${method} ${path}: ${theirs.status} vs ${none.status}`);
      }
    }
    figures.requests += statuses.length;
    figures.accepted += statuses.filter((s) => s < 400).length;
    figures.rejected += statuses.filter((s) => s === 404).length;
    figures.serverErrors += statuses.filter((s) => s >= 500).length;
    figures.notes.push(`cross-account: ${statuses.filter((s) => s === 404).length} of ${statuses.length} answered 404`);
    expect(mismatches, mismatches.join('; ')).toEqual([]);
    expect(
      statuses.every((s) => s === 404),
      JSON.stringify(tally(statuses)),
    ).toBe(true);

    await server.stop();
    expect(await snapshot()).toBe(before);
    const { notes, ...columns } = figures;
    record(`limits and organisers apart, ${engine}`, {
      ...columns,
      note: `accepted = wrong attempts that reached the check, rejected = 429 or 404; ${notes.join('; ')}`,
    });
  });
});
