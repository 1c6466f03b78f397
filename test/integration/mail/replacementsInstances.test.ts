import { Writable } from 'node:stream';
import type { Express } from 'express';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadConfig } from '../../../src/config.ts';
import { castBallot } from '../../../src/elections/castBallot.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { sendDueMail } from '../../../src/elections/sendMail.ts';
import { openDatabase, type Database } from '../../../src/db/knex.ts';
import { createLogger } from '../../../src/log.ts';
import { createMailer } from '../../../src/mail/createMailer.ts';
import { createApp } from '../../../src/web/app.ts';
import { REPLACEMENT_LIMITS } from '../../../src/web/middleware/limits.ts';
import { freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testClock, testContext } from '../../helpers/context.ts';
import { csrfFrom } from '../../helpers/csrf.ts';
import { codeIn, rosterElection, rosterWith } from '../../helpers/roster.ts';
import { startSmtp, type LoopbackSmtp } from '../../helpers/smtp.ts';
import { makeOrganiser } from '../web/organiseSupport.ts';

/**
 * Replacement codes with two app instances on one PostgreSQL schema: two apps, each with its own
 * knex pool and its own limits, sharing the tables (checked with current_schema() and a row written
 * by one and read by the other) and the secrets, as instances must (instanceCheck refuses others).
 * Ten concurrent requests for one member, split across the two, give one grant and one mailed
 * replacement, and every answer is the same page; the limits (per client and election, per election)
 * count across both. PostgreSQL only: PGlite lets one process open a directory (db/dirLock.ts), so
 * there is no second instance to run there; the single-instance cases are in replacements.test.ts.
 */
const pgUrl = process.env.TEST_DATABASE_URL;
const PUBLIC = 'https://vote.rowing.example';
const MEMBERS = [
  { email: 'bow@rowing.example', name: 'Bow' },
  { email: 'stroke@rowing.example', name: 'Stroke' },
  { email: 'cox@rowing.example', name: 'Cox' },
];

const stable = (html: string) => html.replace(/name="_csrf" value="[^"]*"/g, 'name="_csrf" value=""');

describe.runIf(pgUrl)('replacement codes across two instances [postgres]', () => {
  let db: TestDatabase;
  let second: Database;
  let smtp: LoopbackSmtp;
  let ctxA: UseCaseContext;
  let ctxB: UseCaseContext;
  let apps: [Express, Express];
  const clock = testClock('2026-06-01T09:00:00Z');
  let electionId: string;
  const invited = new Map<string, string>();

  const quiet = () => createLogger('debug', new Writable({ write: (_c, _e, cb) => cb() }));
  const appFor = (ctx: UseCaseContext) =>
    createApp({
      config: loadConfig({ VEILTALLY_DATA_DIR: '/nonexistent-test-dir', TRUST_PROXY: 'loopback' }),
      ctx,
      logger: quiet(),
      sessionSecret: 'test-session-secret-0123456789abcdef',
    });

  /** A member's browser on one instance: the ballot page (for its form token), then as many requests as asked. */
  async function browser(app: Express) {
    const agent = request.agent(app);
    const page = await agent.get(`/vote/${electionId}`);
    expect(page.status).toBe(200);
    const csrf = csrfFrom(page.text);
    return (email: string, ip: string) =>
      agent.post(`/vote/${electionId}/replacement`).set('X-Forwarded-For', ip).type('form').send({ _csrf: csrf, email });
  }

  beforeAll(async () => {
    db = await freshDatabase('postgres');
    const schema = (await db.knex.raw('select current_schema() as s')).rows[0].s as string;
    second = openDatabase({ engine: 'postgres', url: pgUrl!, searchPath: schema });
    smtp = await startSmtp();
    const mailer = () =>
      createMailer({ smtpUrl: smtp.url, from: { name: 'Rowing club vote', address: 'vote@rowing.example' }, outboxDir: '/nonexistent' });
    ctxA = { ...testContext(db, { now: clock.now }), mail: { mailer: mailer(), publicUrl: PUBLIC } };
    // The second instance: its own pool and mailer; the same secrets and key directory.
    ctxB = { ...ctxA, knex: second.knex, mail: { mailer: mailer(), publicUrl: PUBLIC } };
    apps = [appFor(ctxA), appFor(ctxB)];
    const organiserId = (await makeOrganiser(ctxA, 'captain@rowing.example')).id;
    const rosterId = await rosterWith(ctxA, organiserId, MEMBERS);
    electionId = await rosterElection(ctxA, organiserId, rosterId);
    await sendDueMail(ctxA);
    await smtp.waitFor(MEMBERS.length);
    for (const r of smtp.received) invited.set(r.envelopeTo[0]!.toLowerCase(), codeIn(r.mail.text ?? '')!);
  });
  afterAll(async () => {
    await ctxA?.mail?.mailer.close();
    await ctxB?.mail?.mailer.close();
    await smtp?.close();
    await second?.close();
    await db?.dispose();
  });

  it('the two instances really share one schema', async () => {
    const schemaOf = async (d: { knex: Database['knex'] }) => (await d.knex.raw('select current_schema() as s')).rows[0].s as string;
    expect(await schemaOf(second)).toBe(await schemaOf(db));
    expect(await schemaOf(db)).toMatch(/^vt_test_/);
    // A row written through one pool is read through the other.
    expect(await second.knex('elections').where({ id: electionId }).first('state')).toEqual({ state: 'open' });
    const pids = async (d: { knex: Database['knex'] }) => (await d.knex.raw('select pg_backend_pid() as p')).rows[0].p as number;
    expect(await pids(second)).not.toBe(await pids(db));
  });

  it('ten concurrent requests for one member, split across both: one grant, one mail, ten identical pages', async () => {
    // A stranger asks first (on the roster election's page, the same form), so the election's replacement mailing exists.
    const stranger = await (await browser(apps[1]))('nobody@elsewhere.example', '10.0.0.2');
    expect(stranger.status).toBe(200);
    const askers = await Promise.all(Array.from({ length: 10 }, (_, i) => browser(apps[i % 2]!)));
    // A barrier in the database: a third connection holds the election row FOR UPDATE, so each
    // request's transaction stops at its FOR SHARE read; once all ten wait there, it lets them go together.
    let answers: Awaited<ReturnType<(typeof askers)[number]>>[] = [];
    await db.knex.transaction(async (gate) => {
      await gate('elections').where({ id: electionId }).forUpdate().first('id');
      const xid = String((await gate.raw('select pg_current_xact_id()::xid as x')).rows[0].x);
      const sent = Promise.all(askers.map((ask, i) => ask(i % 3 === 0 ? 'Bow@Rowing.example' : 'bow@rowing.example', '10.0.0.1')));
      await expect
        .poll(
          async () =>
            Number(
              (
                await db.knex.raw(
                  `select count(distinct pid) as n from pg_locks
                    where not granted and (relation = 'elections'::regclass or transactionid::text = ?)`,
                  [xid],
                )
              ).rows[0].n,
            ),
          { timeout: 20_000, interval: 20 },
        )
        .toBe(10);
      void sent.then((a) => (answers = a));
    });
    await expect.poll(() => answers.length, { timeout: 20_000 }).toBe(10);
    expect(answers.map((a) => a.status)).toEqual(Array(10).fill(200));
    const pages = new Set(answers.map((a) => stable(a.text)));
    expect(pages.size).toBe(1);
    expect(answers[0]!.text).toContain('Check your email');
    // A stranger's answer, given before, is that same page.
    expect(stable(stranger.text)).toBe([...pages][0]);

    const grants = await db.knex('replacement_grants').where({ election_id: electionId }).count({ n: '*' }).first();
    expect(Number(grants!.n)).toBe(1);
    const before = smtp.received.length;
    // Either instance's sender may take it; both run, one after the other, and only one message goes.
    const rounds = [await sendDueMail(ctxB), await sendDueMail(ctxA)];
    expect(rounds.reduce((s, r) => s + r.sent, 0)).toBe(1);
    await smtp.waitFor(before + 1);
    const mailed = smtp.received.slice(before);
    expect(mailed.map((m) => m.envelopeTo)).toEqual([['bow@rowing.example']]);
    const fresh = codeIn(mailed[0]!.mail.text ?? '')!;
    expect(fresh).not.toBe(invited.get('bow@rowing.example'));
    await expect(castBallot(ctxB, { electionId, code: fresh, approvals: [0] })).resolves.toMatchObject({ receipt: expect.any(String) });
  });

  it('the per-client limit counts across both instances: the 11th request from that client is refused on either', async () => {
    const askA = await browser(apps[0]);
    const askB = await browser(apps[1]);
    // 10.0.0.1 made ten requests above, five on each instance.
    for (const ask of [askA, askB]) {
      const over = await ask('cox@rowing.example', '10.0.0.1');
      expect(over.status).toBe(429);
      expect(over.text).toContain('Too many requests for a replacement code');
    }
  });

  it('the per-election ceiling counts across both instances', async () => {
    const askers = [await browser(apps[0]), await browser(apps[1])];
    // So far 11 requests counted towards the ceiling (10 from 10.0.0.1, 1 from 10.0.0.2; the refused ones add nothing).
    let counted = 11;
    const jobs: { ip: string; email: string }[] = [];
    for (let c = 0; counted + jobs.length < REPLACEMENT_LIMITS.perElection; c++) {
      for (let k = 0; k < REPLACEMENT_LIMITS.perClient && counted + jobs.length < REPLACEMENT_LIMITS.perElection; k++) {
        jobs.push({ ip: `10.1.${Math.floor(c / 250)}.${c % 250}`, email: `x${c}-${k}@elsewhere.example` });
      }
    }
    let next = 0;
    const statuses: number[] = [];
    await Promise.all(
      Array.from({ length: 8 }, async (_, w) => {
        while (next < jobs.length) {
          const j = jobs[next++]!;
          statuses.push((await askers[w % 2]!(j.email, j.ip)).status);
        }
      }),
    );
    counted += jobs.length;
    expect(counted).toBe(REPLACEMENT_LIMITS.perElection);
    expect(statuses.filter((s) => s !== 200)).toEqual([]);
    // A client never seen before, on either instance, now meets the election's ceiling.
    for (const ask of askers) {
      const over = await ask('stroke@rowing.example', '192.0.2.77');
      expect(over.status).toBe(429);
    }
    // Nothing more was granted: the one grant of the first test, for bow, is all.
    const grants = await db.knex('replacement_grants').where({ election_id: electionId }).count({ n: '*' }).first();
    expect(Number(grants!.n)).toBe(1);
  });
});
