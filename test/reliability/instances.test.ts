import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import crypto from 'node:crypto';
import { generateCode } from '../../src/custody/index.ts';
import { FIXTURE_PASSWORD, type ElectionFixture } from '../helpers/fixtures.ts';
import type { RunningServer } from '../helpers/server.ts';
import { PG_URL, launch, memberSession, postgresTarget, prepareElection, record, sharedSecrets, type Target } from './_harness.ts';

const EMAIL = 'organiser@rowing.example';

function cookiesOf(res: Response): string {
  return (res.headers.getSetCookie?.() ?? []).map((c) => c.split(';')[0]).join('; ');
}

async function signInPage(base: string, headers: Record<string, string> = {}) {
  const res = await fetch(`${base}/organise/sign-in`, { headers, redirect: 'manual' });
  const html = await res.text();
  return { cookie: cookiesOf(res), csrf: /name="_csrf" value="([^"]+)"/.exec(html)?.[1] ?? '' };
}

async function signIn(base: string, password: string, headers: Record<string, string> = {}) {
  const page = await signInPage(base, headers);
  const res = await fetch(`${base}/organise/sign-in`, {
    method: 'POST',
    redirect: 'manual',
    headers: { 'content-type': 'application/x-www-form-urlencoded', cookie: page.cookie, ...headers },
    body: new URLSearchParams({ _csrf: page.csrf, email: EMAIL, password }),
  });
  return { status: res.status, cookie: cookiesOf(res), setCookie: res.headers.getSetCookie?.() ?? [], text: await res.text() };
}

/** Two app servers on one PostgreSQL: shared sessions, shared limits (also across a restart), one configuration. */
describe.runIf(PG_URL)('several instances on one database [postgres]', () => {
  const secrets = sharedSecrets();
  let target: Target;
  let f: ElectionFixture;
  let a: RunningServer;
  let b: RunningServer;
  let requests = 0;
  let serverErrors = 0;
  const counted = async <T extends { status: number }>(p: Promise<T>) => {
    const r = await p;
    requests++;
    if (r.status >= 500) serverErrors++;
    return r;
  };

  beforeAll(async () => {
    target = await postgresTarget(secrets.env);
    f = await prepareElection(target, secrets.pepper, secrets.seed, 3);
    [a, b] = await Promise.all([launch(target), launch(target)]);
  });
  afterAll(async () => {
    record('two instances', { requests, serverErrors });
    await Promise.all([a?.stop(), b?.stop()]);
    await target?.dispose();
  });

  it('a session made on one instance works on the other, and after the other restarts', async () => {
    const signed = await counted(signIn(a.url, FIXTURE_PASSWORD));
    expect(signed.status).toBe(303);
    const onB = await counted(fetch(`${b.url}/organise`, { headers: { cookie: signed.cookie }, redirect: 'manual' }));
    expect(onB.status).toBe(200);
    await b.stop();
    b = await launch(target);
    expect((await counted(fetch(`${b.url}/organise`, { headers: { cookie: signed.cookie }, redirect: 'manual' }))).status).toBe(200);
  });

  it('sign-in failures count across both instances and a restart; the locked-out page says how long to wait', async () => {
    for (let i = 0; i < 10; i++) expect((await counted(signIn(i % 2 ? a.url : b.url, `wrong password ${i}`))).status).toBe(401);
    const locked = await counted(signIn(b.url, FIXTURE_PASSWORD));
    expect(locked.status).toBe(429);
    expect(locked.text).toMatch(/Wait \d+ minutes?, then try again/);
    await a.stop();
    a = await launch(target);
    expect((await counted(signIn(a.url, FIXTURE_PASSWORD))).status).toBe(429);
  });

  it('forwarding headers from a peer that is not a configured proxy change nothing: the code limit still holds', async () => {
    const m = await memberSession(a.url, f.id);
    const unknown = generateCode((n) => crypto.randomBytes(n)).display;
    const post = (base: string, code: string, spoof: string) =>
      counted(
        fetch(`${base}/vote/${f.id}/ballot`, {
          method: 'POST',
          redirect: 'manual',
          headers: { 'content-type': 'application/x-www-form-urlencoded', cookie: m.cookie, 'x-forwarded-for': spoof },
          body: new URLSearchParams({ _csrf: m.csrf, code }),
        }),
      );
    for (let i = 0; i < 300; i++) expect((await post(i % 2 ? a.url : b.url, unknown, `203.0.113.${i % 250}`)).status).toBe(404);
    expect((await post(b.url, unknown, '198.51.100.7')).status).toBe(429);
    // A valid code still passes for this address.
    expect((await post(a.url, f.codes[0]!, '198.51.100.8')).status).toBe(303);
  });

  it('refuses to start with a secret that differs from the others, or https PUBLIC_URL without TRUST_PROXY', async () => {
    const other = crypto.randomBytes(32).toString('hex');
    const mismatch = await launch(target, { VEILTALLY_CODE_PEPPER: other }).then(
      async (s) => {
        await s.stop();
        return 'started';
      },
      (e: Error) => e.message,
    );
    expect(mismatch).toContain('VEILTALLY_CODE_PEPPER differs from the value the other app servers on this database use');
    const https = await launch(target, { PUBLIC_URL: 'https://vote.rowing.example' }).then(
      async (s) => {
        await s.stop();
        return 'started';
      },
      (e: Error) => e.message,
    );
    expect(https).toContain('set TRUST_PROXY to');
  });

  it('behind a configured proxy on https, with X-Forwarded-Host set, forms work and the cookie is Secure', async () => {
    const proxied = await launch(target, { PUBLIC_URL: 'https://vote.rowing.example', TRUST_PROXY: 'loopback' });
    try {
      const headers = { 'x-forwarded-proto': 'https', 'x-forwarded-host': 'vote.rowing.example', origin: 'https://vote.rowing.example' };
      // A fresh account name keeps this apart from the locked one above.
      const page = await signInPage(proxied.url, headers);
      expect(page.cookie).toContain('__Host-veiltally-csrf=');
      const res = await counted(
        fetch(`${proxied.url}/organise/sign-in`, {
          method: 'POST',
          redirect: 'manual',
          headers: { 'content-type': 'application/x-www-form-urlencoded', cookie: page.cookie, ...headers },
          body: new URLSearchParams({ _csrf: page.csrf, email: 'someone.else@rowing.example', password: 'not this one' }),
        }),
      );
      // Through the origin check and the token check to the password check itself.
      expect(res.status).toBe(401);
    } finally {
      await proxied.stop();
    }
  });
});
