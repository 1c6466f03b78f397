import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import fc from 'fast-check';
import type { Server } from 'node:http';
import { Writable } from 'node:stream';
import { loadConfig } from '../../src/config.ts';
import { createApp } from '../../src/web/app.ts';
import { createLogger } from '../../src/log.ts';
import { answerClientError } from '../../src/web/middleware/security.ts';
import { freshDatabase, type TestDatabase } from '../helpers/databases.ts';
import { FIXTURE_PASSWORD, createOrganiser, openElectionFixture, type ElectionFixture } from '../helpers/fixtures.ts';
import { TEST_KDF, testContext } from '../helpers/context.ts';
import { pool, record } from './_harness.ts';
import { fetchMember, toConfirm } from '../helpers/memberWalk.ts';

/**
 * Hostile input: fast-check generates requests against every form and path (bad percent-encoding,
 * NUL and other control characters, arrays where one value belongs, missing and repeated fields,
 * over-long values, unknown ids), at least 10,000 of them, sent over loopback to a listening app on
 * the real database. Not one may answer 5xx or log at error level. Every page carries the security
 * headers; markup typed into a field comes back as text; an oversized body gets 413.
 */
const RUNS = Number(process.env.FUZZ_RUNS ?? 10_000);
const SEED = Number(process.env.FUZZ_SEED ?? 20261202);

const FORMS: Array<{ path: string; fields: string[]; organiser?: boolean }> = [
  { path: '/organise/sign-in', fields: ['email', 'password', 'next'] },
  { path: '/organise/sign-in/resume', fields: ['email', 'password', 'resumeTo', 'title', 'optionLabel'] },
  { path: '/organise/first-run', fields: ['email', 'password', 'passwordAgain'] },
  {
    path: '/organise/elections/new',
    organiser: true,
    fields: [
      'title',
      'description',
      'optionLabel',
      'optionDescription',
      'seats',
      'epsilon',
      'neighbour',
      'expectedVoters',
      'timeZone',
      'opensAt',
      'closesAt',
      'publishTurnout',
      'retention',
      'retentionDays',
      'passphrase',
      'passphraseAgain',
      'intent',
    ],
  },
  { path: '/organise/elections/:id/edit', organiser: true, fields: ['title', 'optionLabel', 'seats', 'epsilon', 'opensAt', 'closesAt', 'intent'] },
  { path: '/organise/elections/:id/guidance', organiser: true, fields: ['title', 'optionLabel', 'epsilon', 'expectedVoters'] },
  { path: '/organise/elections/:id/codes', organiser: true, fields: ['count'] },
  { path: '/organise/elections/:id/codes/revoke', organiser: true, fields: ['code'] },
  { path: '/organise/elections/:id/open', organiser: true, fields: ['mode', 'confirm'] },
  { path: '/organise/elections/:id/close', organiser: true, fields: ['confirm'] },
  { path: '/organise/elections/:id/tally', organiser: true, fields: ['passphrase'] },
  { path: '/organise/elections/:id/publish', organiser: true, fields: ['confirm'] },
  { path: '/organise/organisers', organiser: true, fields: ['email', 'password', 'passwordAgain'] },
  { path: '/vote/:id/ballot', fields: ['code', 'approve'] },
  { path: '/vote/:id/confirm', fields: ['approve', 'code'] },
  { path: '/vote/:id/cast', fields: ['readBack', 'code', 'approve'] },
  { path: '/results/:id/receipt', fields: ['receipt'] },
];
const PAGES = [
  '/',
  '/healthz',
  '/organise',
  '/organise/sign-in',
  '/organise/first-run',
  '/organise/organisers',
  '/organise/elections/new',
  '/organise/elections/:id',
  '/organise/elections/:id/edit',
  '/organise/elections/:id/codes',
  '/organise/elections/:id/open',
  '/organise/elections/:id/close',
  '/organise/elections/:id/tally',
  '/organise/elections/:id/publish',
  '/vote/:id',
  '/vote/:id/ballot',
  '/vote/:id/confirm',
  '/vote/:id/cast',
  '/vote/:id/receipt',
  '/results/:id',
  '/results/:id/receipt',
  '/static/style.css',
];

const text = fc.oneof(
  fc.string({ maxLength: 30 }),
  fc.string({ unit: 'binary', maxLength: 30 }),
  fc.constantFrom(
    '',
    ' ',
    '\u0000',
    'a\u0000b',
    '<script>alert(1)</script>',
    '%',
    '%E0%A4%A',
    '1e309',
    '-1',
    '0',
    'NaN',
    '2026-13-45T25:61',
    '../../etc/passwd',
    '\u202e',
    '\ud800',
  ),
  fc.integer({ min: 1000, max: 20_000 }).map((n) => 'x'.repeat(n)),
);
const value = fc.oneof({ weight: 4, arbitrary: text }, { weight: 1, arbitrary: fc.array(text, { minLength: 2, maxLength: 4 }) });

/** encodeURIComponent throws on a lone surrogate; send its bytes as the UTF-8 replacement would be. */
const enc = (t: string) => {
  try {
    return encodeURIComponent(t);
  } catch {
    return '%EF%BF%BD';
  }
};

type Req = {
  method: 'GET' | 'POST';
  path: string;
  idKind: number;
  fields: Array<[string, string[]]>;
  csrf: boolean;
  organiser: boolean;
  rawQuery: string;
};

const idArb = fc.oneof(
  fc.constant(0), // the real election
  fc.constant(1), // unknown uuid
  fc.constant(2), // bad percent-encoding
  fc.constant(3), // long junk
  fc.constant(4), // fuzzed text
);

function requestArb(): fc.Arbitrary<Req> {
  const post = fc.record({
    form: fc.constantFrom(...FORMS),
    idKind: idArb,
    values: fc.dictionary(fc.string({ maxLength: 8 }), value, { maxKeys: 2 }),
    chosen: fc.array(fc.tuple(fc.nat(), value, fc.boolean()), { maxLength: 8 }),
    csrf: fc.boolean().map((b) => b || Math.random() < 0.8),
    organiser: fc.boolean(),
  });
  const get = fc.record({
    page: fc.constantFrom(...PAGES),
    idKind: idArb,
    query: fc.oneof(
      fc.constant(''),
      text.map((t) => `?next=${enc(t)}`),
      fc.constant('?%E0%A4%A=1'),
    ),
    organiser: fc.boolean(),
  });
  return fc.oneof(
    {
      weight: 3,
      arbitrary: post.map((p) => ({
        method: 'POST' as const,
        path: p.form.path,
        idKind: p.idKind,
        fields: [
          ...p.chosen
            .filter(([, , keep]) => keep)
            .map(([i, v]) => [p.form.fields[i % p.form.fields.length]!, Array.isArray(v) ? v : [v]] as [string, string[]]),
          ...Object.entries(p.values).map(([k, v]) => [k, Array.isArray(v) ? v : [v]] as [string, string[]]),
        ],
        csrf: p.csrf,
        organiser: p.organiser || Boolean(p.form.organiser),
        rawQuery: '',
      })),
    },
    {
      weight: 2,
      arbitrary: get.map((g) => ({
        method: 'GET' as const,
        path: g.page,
        idKind: g.idKind,
        fields: [],
        csrf: false,
        organiser: g.organiser,
        rawQuery: g.query,
      })),
    },
  );
}

describe.runIf(process.env.TEST_DATABASE_URL)('hostile input at volume [postgres]', () => {
  const engine = 'postgres' as const;
  let db: TestDatabase;
  let server: Server;
  let base: string;
  let f: ElectionFixture;
  let organiserCookie = '';
  const errorLines: string[] = [];

  beforeAll(async () => {
    db = await freshDatabase(engine);
    const ctx = testContext(db, { passwordKdf: TEST_KDF });
    const organiserId = await createOrganiser(ctx);
    f = await openElectionFixture(ctx, organiserId, { codes: 50 });
    const sink = new Writable({
      write(chunk, _e, cb) {
        for (const line of String(chunk).split('\n')) if (line && JSON.parse(line).level >= 50) errorLines.push(line);
        cb();
      },
    });
    const app = createApp({
      config: loadConfig({ VEILTALLY_DATA_DIR: '/nonexistent-test-dir' }),
      ctx,
      logger: createLogger('info', sink),
      sessionSecret: 'hostile-input-session-secret-0123456789',
    });
    server = app.listen(0, '127.0.0.1');
    server.on('clientError', answerClientError); // as main.ts does
    await new Promise((r) => server.once('listening', r));
    const a = server.address();
    base = `http://127.0.0.1:${typeof a === 'object' && a ? a.port : 0}`;
    const page = await fetch(`${base}/organise/sign-in`);
    const anon = (page.headers.getSetCookie?.() ?? []).map((c) => c.split(';')[0]).join('; ');
    const csrf = /name="_csrf" value="([^"]+)"/.exec(await page.text())![1]!;
    const res = await fetch(`${base}/organise/sign-in`, {
      method: 'POST',
      redirect: 'manual',
      headers: { 'content-type': 'application/x-www-form-urlencoded', cookie: anon },
      body: new URLSearchParams({ _csrf: csrf, email: 'organiser@rowing.example', password: FIXTURE_PASSWORD }),
    });
    expect(res.status).toBe(303);
    organiserCookie = [anon, ...(res.headers.getSetCookie?.() ?? []).map((c) => c.split(';')[0])].join('; ');
  });
  afterAll(async () => {
    await new Promise((r) => server?.close(r));
    await db?.dispose();
  });

  async function tokensFor(cookie: string): Promise<{ cookie: string; csrf: string }> {
    const res = await fetch(`${base}/organise/elections/new`, { headers: { cookie }, redirect: 'manual' });
    const html = await res.text();
    const extra = (res.headers.getSetCookie?.() ?? []).map((c) => c.split(';')[0]).join('; ');
    return { cookie: extra ? `${cookie}; ${extra}` : cookie, csrf: /name="_csrf" value="([^"]+)"/.exec(html)?.[1] ?? '' };
  }

  it(`answers ${RUNS.toLocaleString('en')} generated requests without one 5xx, with the security headers on every answer`, async () => {
    const organiser = await tokensFor(organiserCookie);
    // The anonymous member has walked to the read-back, so fuzzed steps meet a real step cookie too.
    const member = fetchMember(base);
    const readBack = await toConfirm(member, f.id, f.codes[49]!, [0]);
    const anonymous = { cookie: member.jar.header(), csrf: /name="_csrf" value="([^"]+)"/.exec(readBack.text)![1]! };
    const requests = fc.sample(requestArb(), { numRuns: RUNS, seed: SEED });
    const ids = (r: Req) =>
      [f.id, '00000000-0000-4000-8000-000000000000', '%E0%A4%A', 'z'.repeat(5000), enc(String(r.fields[0]?.[1][0] ?? 'x')).slice(0, 2000) || 'x'][
        r.idKind
      ]!;
    const statuses = new Map<number, number>();
    const failures: string[] = [];
    let headerProblems = 0;
    const results = await pool(requests.length, 16, 420_000, async (i) => {
      const r = requests[i]!;
      const who = r.organiser ? organiser : anonymous;
      // Every fifth anonymous request also sends a forged step cookie first (the one the server reads): the fuzzed
      // text in the cookie's own alphabet, so it reaches the decryption, or percent-encoded, so it does not.
      const junk = String(r.fields[0]?.[1][0] ?? 'A'.repeat(300));
      const forged =
        !r.organiser && i % 5 === 0 ? `vt-vote=${(i % 10 === 0 ? Buffer.from(junk).toString('base64url') : enc(junk)).slice(0, 3000)}; ` : '';
      const path = r.path.replace(':id', ids(r)) + r.rawQuery;
      const body = new URLSearchParams();
      if (r.csrf) body.append('_csrf', who.csrf);
      for (const [k, vs] of r.fields) for (const v of vs) body.append(k, v);
      const res = await fetch(`${base}${path}`, {
        method: r.method,
        redirect: 'manual',
        headers: { cookie: forged + who.cookie, ...(r.method === 'POST' ? { 'content-type': 'application/x-www-form-urlencoded' } : {}) },
        body: r.method === 'POST' ? body : undefined,
      });
      await res.arrayBuffer();
      statuses.set(res.status, (statuses.get(res.status) ?? 0) + 1);
      if (res.status >= 500 && failures.length < 5)
        failures.push(`${r.method} ${path.slice(0, 120)} ${JSON.stringify(r.fields).slice(0, 200)} → ${res.status}`);
      const csp = res.headers.get('content-security-policy') ?? '';
      if (
        !/frame-ancestors 'none'/.test(csp) ||
        !/script-src 'self'(;|$)/.test(csp) ||
        /unsafe-inline/.test(csp) ||
        res.headers.get('x-content-type-options') !== 'nosniff' ||
        res.headers.get('x-frame-options') !== 'DENY' ||
        res.headers.get('referrer-policy') !== 'same-origin' ||
        !res.headers.get('permissions-policy')
      ) {
        headerProblems++;
        if (headerProblems <= 3)
          failures.push(`headers: ${r.method} ${path.slice(0, 80)} → ${res.status} ${csp} xfo=${res.headers.get('x-frame-options')}`);
      }
      return res.status;
    });
    const sent = results.filter((s) => s !== undefined).length;
    const serverErrors = results.filter((s) => s >= 500).length;
    record(`hostile input, ${engine}`, {
      requests: sent,
      accepted: results.filter((s) => s < 400).length,
      rejected: results.filter((s) => s >= 400 && s < 500).length,
      serverErrors,
    });
    expect(failures, `seed ${SEED}`).toEqual([]);
    expect(serverErrors).toBe(0);
    expect(sent).toBe(RUNS);
    expect(headerProblems).toBe(0);
    expect(errorLines).toEqual([]);
  }, 480_000);

  it('answers a body over the limit with 413, and shows typed markup as text', async () => {
    const organiser = await tokensFor(organiserCookie);
    const big = await fetch(`${base}/organise/elections/new`, {
      method: 'POST',
      headers: { 'content-type': 'application/x-www-form-urlencoded', cookie: organiser.cookie },
      body: new URLSearchParams({ _csrf: organiser.csrf, title: 'x'.repeat(600 * 1024) }),
    });
    expect(big.status).toBe(413);
    const markup = '<script>alert("boat")</script><img src=x onerror=alert(1)>';
    const page = await fetch(`${base}/organise/elections/new`, {
      method: 'POST',
      headers: { 'content-type': 'application/x-www-form-urlencoded', cookie: organiser.cookie },
      body: new URLSearchParams({ _csrf: organiser.csrf, title: markup, intent: 'save', optionLabel: markup, epsilon: 'not a number' }),
    });
    const html = await page.text();
    expect(page.status).toBeLessThan(500);
    expect(html).not.toContain(markup);
    expect(html).not.toContain('<script>alert');
    expect(html).toContain('&lt;script&gt;alert(&#34;boat&#34;)&lt;/script&gt;');
  });
});
