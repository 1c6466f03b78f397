import crypto from 'node:crypto';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testApp } from '../../helpers/app.ts';
import { testClock } from '../../helpers/context.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { generateCode } from '../../../src/custody/index.ts';
import { limitKeyHash } from '../../../src/custody/keyedHash.ts';
import { closeElection } from '../../../src/elections/closeElection.ts';
import { openElectionFixture } from '../../helpers/fixtures.ts';
import { makeOrganiser, organiseContext, PASSWORD, tokenIn } from './organiseSupport.ts';

/**
 * Attempt limits under bursts, from many addresses (X-Forwarded-For from a trusted loopback proxy):
 * counted atomically before the expensive check, per election on the canonical id, and never
 * letting one address lock out others (README, Threat model, "Attempt limits").
 */
const HOUR = 3600_000;
/** How the rows were keyed before: an unkeyed SHA-256, which anyone can compute for a guessed address. */
const unkeyed = (value: string) => crypto.createHash('sha256').update(value).digest('base64url').slice(0, 32);

describe.each(engines)('attempt limits under bursts [%s]', (engine) => {
  let db: TestDatabase;
  let ctx: UseCaseContext;
  let server: http.Server;
  let base = '';
  const clock = testClock('2026-06-01T09:00:00Z');

  beforeAll(async () => {
    db = await freshDatabase(engine);
    ctx = organiseContext(db, clock);
    server = http.createServer(testApp(ctx, { TRUST_PROXY: 'loopback' }));
    await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
    base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  });
  afterAll(async () => {
    await new Promise((r) => server.close(r));
    await db.dispose();
  });

  /** A browser at one address: its cookies and the form token of a page. */
  async function visit(address: string, path: string, cookie = '') {
    const res = await fetch(base + path, { headers: { 'x-forwarded-for': address, cookie } });
    const set = res.headers.getSetCookie().map((c) => c.split(';')[0]);
    const html = await res.text();
    return { cookie: [cookie, ...set].filter(Boolean).join('; '), csrf: tokenIn(html) };
  }
  async function post(address: string, path: string, cookie: string, fields: Record<string, string>) {
    const res = await fetch(base + path, {
      method: 'POST',
      redirect: 'manual',
      headers: { 'x-forwarded-for': address, cookie, 'content-type': 'application/x-www-form-urlencoded' },
      body: new URLSearchParams(fields),
    });
    await res.arrayBuffer();
    return { status: res.status, cookie: res.headers.getSetCookie().map((c) => c.split(';')[0]) };
  }
  const tally = (statuses: number[]) => statuses.reduce<Record<number, number>>((t, s) => ((t[s] = (t[s] ?? 0) + 1), t), {});
  const points = async (name: string, key: string) =>
    Number(
      (
        await db
          .knex('rate_limits')
          .where({ key: `${name}:${limitKeyHash(ctx.secrets.codePepper, key)}` })
          .first('points')
      )?.points ?? 0,
    );

  async function signIn(address: string, email: string, password: string) {
    const page = await visit(address, '/organise/sign-in');
    return post(address, '/organise/sign-in', page.cookie, { _csrf: page.csrf, email, password, next: '' });
  }

  it('100 concurrent wrong sign-ins for one account: 10 checked, 90 refused; the owner still signs in from their own address', async () => {
    const owner = await makeOrganiser(ctx, 'treasurer@club.example');
    const page = await visit('198.51.100.7', '/organise/sign-in');
    const statuses = await Promise.all(
      Array.from({ length: 100 }, () =>
        post('198.51.100.7', '/organise/sign-in', page.cookie, {
          _csrf: page.csrf,
          email: owner.email,
          password: 'a wrong guess at it',
          next: '',
        }).then((r) => r.status),
      ),
    );
    expect(tally(statuses)).toEqual({ 401: 10, 429: 90 });
    expect((await signIn('203.0.113.20', owner.email, PASSWORD)).status).toBe(303);
  });

  it('an account’s ceiling binds many addresses, and spares an address its owner signed in from before', async () => {
    const owner = await makeOrganiser(ctx, 'coach@club.example');
    expect((await signIn('203.0.113.30', owner.email, PASSWORD)).status).toBe(303); // the owner's usual address
    const statuses: number[] = [];
    for (let a = 0; a < 12; a++)
      statuses.push(
        ...(await Promise.all(Array.from({ length: 10 }, () => signIn(`192.0.2.${a + 1}`, owner.email, 'a wrong guess at it')))).map((r) => r.status),
      );
    // 12 addresses × 10 = 120 wrong attempts: 100 checked before the ceiling, 20 refused.
    expect(tally(statuses)).toEqual({ 401: 100, 429: 20 });
    expect((await signIn('192.0.2.200', owner.email, PASSWORD)).status).toBe(429); // a new address waits
    expect((await signIn('203.0.113.30', owner.email, PASSWORD)).status).toBe(303); // the owner's does not
  });

  it('100 concurrent wrong tally passphrases: 10 checked, 90 refused', async () => {
    const organiser = await makeOrganiser(ctx, 'cox@club.example');
    const f = await openElectionFixture(ctx, organiser.id, { opensAt: clock.now(), closesAt: new Date(clock.now().getTime() + 24 * HOUR) });
    await closeElection(ctx, { electionId: f.id, organiserId: organiser.id });
    const signed = await signIn('198.51.100.9', organiser.email, PASSWORD);
    expect(signed.status).toBe(303);
    const form = await visit('198.51.100.9', `/organise/elections/${f.id}/tally`, signed.cookie.join('; '));
    const statuses = await Promise.all(
      Array.from({ length: 100 }, () =>
        post('198.51.100.9', `/organise/elections/${f.id}/tally`, form.cookie, { _csrf: form.csrf, passphrase: 'not the passphrase at all' }).then(
          (r) => r.status,
        ),
      ),
    );
    expect(tally(statuses)).toEqual({ 403: 10, 429: 90 });
  });

  it('distributed code guesses count per election, keyed on the canonical id: 20 addresses × 200 wrong codes, 3,000 checked', async () => {
    const f = await openElectionFixture(ctx, (await makeOrganiser(ctx)).id, {
      opensAt: clock.now(),
      closesAt: new Date(clock.now().getTime() + 24 * HOUR),
    });
    const statuses: number[] = [];
    await Promise.all(
      Array.from({ length: 20 }, async (_, a) => {
        const address = `10.20.0.${a + 1}`;
        const page = await visit(address, `/vote/${f.id}`);
        for (let i = 0; i < 200; i++) {
          // Every other guess types the id in capitals: the same election, the same count.
          const id = i % 2 ? f.id.toUpperCase() : f.id;
          statuses.push(
            (await post(address, `/vote/${id}/ballot`, page.cookie, { _csrf: page.csrf, code: generateCode(ctx.random).display })).status,
          );
        }
      }),
    );
    const t = tally(statuses);
    expect(t[429]).toBeGreaterThanOrEqual(1000);
    expect((t[404] ?? 0) + (t[400] ?? 0)).toBeLessThanOrEqual(3000);
    expect(await points('code-election', f.id)).toBeGreaterThanOrEqual(3000);
    expect(await points('code-election', f.id.toUpperCase())).toBe(0);
  });

  it('one address’s refused guesses never lock a ballot’s code box, nor the home page’s, for other addresses', async () => {
    const f = await openElectionFixture(ctx, (await makeOrganiser(ctx)).id, {
      opensAt: clock.now(),
      closesAt: new Date(clock.now().getTime() + 24 * HOUR),
    });
    const noisy = '10.30.0.1';
    const ballot = await visit(noisy, `/vote/${f.id}`);
    const home = await visit(noisy, '/');
    const wrong = () => generateCode(ctx.random).display;
    const run = async (n: number, send: () => Promise<{ status: number }>) => {
      for (let i = 0; i < n; i += 50) await Promise.all(Array.from({ length: Math.min(50, n - i) }, send));
    };
    await run(400, () => post(noisy, `/vote/${f.id}/ballot`, ballot.cookie, { _csrf: ballot.csrf, code: wrong() }));
    await run(3100, () => post(noisy, '/ballot', home.cookie, { _csrf: home.csrf, code: wrong() }));
    expect(await points('code-election', f.id)).toBeLessThanOrEqual(300);
    const other = '10.30.0.2';
    const otherBallot = await visit(other, `/vote/${f.id}`);
    const otherHome = await visit(other, '/');
    expect((await post(other, `/vote/${f.id}/ballot`, otherBallot.cookie, { _csrf: otherBallot.csrf, code: wrong() })).status).toBe(404);
    expect((await post(other, '/ballot', otherHome.cookie, { _csrf: otherHome.csrf, code: wrong() })).status).toBe(404);
    expect((await post(noisy, '/ballot', home.cookie, { _csrf: home.csrf, code: wrong() })).status).toBe(429);
  });

  it('a copy of the database cannot test a guessed address or account against the limit rows; the pepper can', async () => {
    const owner = await makeOrganiser(ctx, 'secretary@tenants.example');
    await signIn('203.0.113.77', owner.email, 'not the password, twice over');
    const keys: string[] = (await db.knex('rate_limits').select('key')).map((r: { key: string }) => r.key.split(':').slice(1).join(':'));
    // Whoever holds only the rows hashes every address of the /24 and every pairing with the account.
    const guesses = Array.from({ length: 256 }, (_, i) => `203.0.113.${i}`).flatMap((a) => [a, `${a}\u0000${owner.email}`]);
    expect(guesses.filter((g) => keys.includes(unkeyed(g)))).toEqual([]);
    expect(keys.includes(unkeyed(owner.email))).toBe(false);
    // The operator, who holds the pepper, can (a control: the rows are there).
    // (Earlier tests here signed in from other addresses of the /24 too.)
    const found = guesses.filter((g) => keys.includes(limitKeyHash(ctx.secrets.codePepper, g)));
    expect(found).toEqual(expect.arrayContaining(['203.0.113.77', `203.0.113.77\u0000${owner.email}`]));
  });
});
