import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { FIXTURE_PASSWORD } from '../helpers/fixtures.ts';
import { csrfFrom } from '../helpers/csrf.ts';
import type { RunningServer } from '../helpers/server.ts';
import { PG_URL, launch, pgliteTarget, postgresTarget, prepareElection, record, sharedSecrets, type Target } from './_harness.ts';

/**
 * CSRF with a planted cookie against the real server process: the attacker fetches forms for
 * themselves, plants the nonce cookie in the victim's browser and sends their own tokens with the
 * victim's cookies; then the same with Origin: null and the victim's own token. Every forged post
 * must be refused and change nothing (the count of issued codes, the victim's session and password). Addresses come through X-Forwarded-For from loopback.
 */
const targets = ['pglite', ...(PG_URL ? ['postgres'] : [])] as const;
const ATTACKER = '203.0.113.7';
const VICTIM = '198.51.100.20';
const EMAIL = 'organiser@rowing.example';

type Jar = Map<string, string>;
const header = (jar: Jar) => [...jar].map(([k, v]) => `${k}=${v}`).join('; ');
function keep(jar: Jar, res: Response) {
  for (const c of res.headers.getSetCookie?.() ?? []) {
    const pair = c.split(';')[0]!;
    const i = pair.indexOf('=');
    jar.set(pair.slice(0, i), pair.slice(i + 1));
  }
}

describe.each(targets)('CSRF with a planted cookie, real server [%s]', (engine) => {
  const secrets = sharedSecrets();
  let target: Target;
  let server: RunningServer;
  let electionId: string;

  beforeAll(async () => {
    target = engine === 'postgres' ? await postgresTarget(secrets.env) : pgliteTarget(secrets.env);
    electionId = (await prepareElection(target, secrets.pepper, secrets.seed, 1)).id;
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
  const post = async (jar: Jar, address: string, path: string, fields: Record<string, string>, extra: Record<string, string> = {}) => {
    const res = await fetch(server.url + path, {
      method: 'POST',
      redirect: 'manual',
      headers: { 'content-type': 'application/x-www-form-urlencoded', cookie: header(jar), 'x-forwarded-for': address, ...extra },
      body: new URLSearchParams(fields),
    });
    keep(jar, res);
    await res.arrayBuffer();
    return res.status;
  };
  const attackerForm = async (path: string) => {
    const jar: Jar = new Map();
    const page = await get(jar, ATTACKER, path);
    return { token: csrfFrom(page.text), nonce: jar.get('veiltally-csrf')! };
  };

  it('forged posts on organiser routes, login CSRF and Origin: null are all refused, and nothing changes', async () => {
    const victim: Jar = new Map();
    const signIn = await get(victim, VICTIM, '/organise/sign-in');
    expect(await post(victim, VICTIM, '/organise/sign-in', { _csrf: csrfFrom(signIn.text), email: EMAIL, password: FIXTURE_PASSWORD })).toBe(303);
    // Read from the victim's own codes page: the embedded database is the server's alone while it runs.
    const issued = async () => /(\d+) ballot codes? issued/.exec((await get(victim, VICTIM, `/organise/elections/${electionId}/codes`)).text)?.[1];
    const codesBefore = await issued();
    expect(codesBefore).toBeDefined();

    const statuses: number[] = [];
    const forged: Array<[string, Record<string, string>]> = [
      [`/organise/elections/${electionId}/codes`, { count: '5', format: 'screen' }],
      [`/organise/elections/${electionId}/close`, { confirm: 'yes' }],
      [
        '/organise/account/password',
        { current: FIXTURE_PASSWORD, password: 'a password the attacker chose', passwordAgain: 'a password the attacker chose' },
      ],
      ['/organise/sign-out', {}],
    ];
    for (const from of ['/', '/organise/sign-in']) {
      for (const [path, fields] of forged) {
        const { token, nonce } = await attackerForm(from);
        victim.set('veiltally-csrf', nonce);
        statuses.push(await post(victim, VICTIM, path, { ...fields, _csrf: token }));
      }
    }
    // Login CSRF: a fresh browser, the attacker's nonce planted, the attacker's credentials (the only account here).
    for (const from of ['/', '/organise/sign-in']) {
      const { token, nonce } = await attackerForm(from);
      const fresh: Jar = new Map([['veiltally-csrf', nonce]]);
      statuses.push(await post(fresh, VICTIM, '/organise/sign-in', { _csrf: token, email: EMAIL, password: FIXTURE_PASSWORD }));
      expect(fresh.has('veiltally')).toBe(false);
    }
    // Origin: null with the victim's own valid token.
    const page = await get(victim, VICTIM, `/organise/elections/${electionId}/codes`);
    expect(page.status).toBe(200);
    statuses.push(
      await post(
        victim,
        VICTIM,
        `/organise/elections/${electionId}/codes`,
        { _csrf: csrfFrom(page.text), count: '5', format: 'screen' },
        { origin: 'null' },
      ),
    );

    const accepted = statuses.filter((s) => s < 400).length;
    const codesAfter = await issued();
    record(`CSRF planted cookie, ${engine}`, {
      requests: statuses.length,
      accepted,
      rejected: statuses.filter((s) => s === 403).length,
      serverErrors: statuses.filter((s) => s >= 500).length,
    });
    expect(
      statuses.every((s) => s === 403),
      JSON.stringify(statuses),
    ).toBe(true);
    expect(codesAfter).toBe(codesBefore);
    // The victim is still signed in with their own password, and their own form still works.
    const own = await get(victim, VICTIM, `/organise/elections/${electionId}/codes`);
    expect(own.status).toBe(200);
    expect(await post(victim, VICTIM, `/organise/elections/${electionId}/codes`, { _csrf: csrfFrom(own.text), count: '1', format: 'screen' })).toBe(
      200,
    );
  });
});
