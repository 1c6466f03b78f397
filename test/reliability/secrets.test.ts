import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import { Writable } from 'node:stream';
import request from 'supertest';
import { agentMember } from '../helpers/memberSuite.ts';
import { voteThrough } from '../helpers/memberWalk.ts';
import type { Express } from 'express';
import { loadConfig } from '../../src/config.ts';
import { createApp } from '../../src/web/app.ts';
import { createLogger } from '../../src/log.ts';
import { freshDatabase, type TestDatabase } from '../helpers/databases.ts';
import { testClock, testContext, TEST_KDF } from '../helpers/context.ts';
import {
  PASSPHRASE,
  PASSWORD,
  createElectionViaForm,
  encode,
  makeOrganiser,
  postForm,
  tokenIn as csrfFrom,
} from '../integration/web/organiseSupport.ts';
import { record } from './_harness.ts';

/**
 * A whole election through the pages with the log at debug level: no passphrase, password, ballot
 * code, receipt, session id or ballot content may appear in the log, nor in a pg_dump of the data.
 */
describe.runIf(process.env.TEST_DATABASE_URL)('secrets stay out of logs and dumps [postgres]', () => {
  let db: TestDatabase;
  let app: Express;
  let schema: string;
  const log: string[] = [];
  const clock = testClock(new Date());

  beforeAll(async () => {
    db = await freshDatabase('postgres');
    schema = (await db.knex.raw('select current_schema() as s')).rows[0].s;
    const ctx = testContext(db, { passwordKdf: TEST_KDF, now: clock.now });
    const sink = new Writable({
      write(chunk, _e, cb) {
        log.push(String(chunk));
        cb();
      },
    });
    app = createApp({
      config: loadConfig({ VEILTALLY_DATA_DIR: '/nonexistent-test-dir', LOG_LEVEL: 'debug' }),
      ctx,
      logger: createLogger('debug', sink),
      sessionSecret: 'secrets-suite-session-secret-0123456789',
    });
    await makeOrganiser(ctx, 'chair@tenants.example');
  });
  afterAll(() => db?.dispose());

  it('runs a full election and finds none of its secrets in the log or in pg_dump', async () => {
    const agent = request.agent(app);
    const signInPage = await agent.get('/organise/sign-in').expect(200);
    const signIn = await agent
      .post('/organise/sign-in')
      .type('form')
      .send({ _csrf: csrfFrom(signInPage.text), email: 'chair@tenants.example', password: PASSWORD })
      .expect(303);
    const sid = decodeURIComponent(/veiltally=([^;]+)/.exec(([] as string[]).concat(signIn.headers['set-cookie'] ?? []).join(';'))![1]!)
      .replace(/^s:/, '')
      .split('.')[0]!;
    expect(sid.length).toBeGreaterThan(10);

    const day = 24 * 3600_000;
    const local = (d: Date) => d.toISOString().slice(0, 16);
    const id = await createElectionViaForm(agent, {
      opensAt: local(new Date(Date.now() + day)),
      closesAt: local(new Date(Date.now() + 3 * day)),
      timeZone: 'UTC',
    });
    const issued = await postForm(agent, `/organise/elections/${id}/codes`, `/organise/elections/${id}/codes`, { count: '6', format: 'csv' });
    expect(issued.status).toBe(200);
    // The answer is a page whose one button downloads the file (views/organise/codes-download.ejs).
    const field = (name: string) => new RegExp(`name="${name}" value="([^"]*)"`).exec(issued.text)?.[1] ?? '';
    const csv = await agent
      .post(`/organise/elections/${id}/codes/csv`)
      .type('form')
      .send(encode({ _csrf: field('_csrf'), batch: field('batch'), count: field('count') }));
    expect(csv.status).toBe(200);
    // The CSV's first column (src/web/presenters/codes.ts: code,ballot_url).
    const codes = csv.text
      .trim()
      .split(/\r?\n/)
      .slice(1)
      .map((line) => line.split(',')[0]!.replace(/"/g, ''));
    expect(
      codes,
      csv.text
        .replace(/<[^>]+>/g, ' ')
        .replace(/\s+/g, ' ')
        .slice(0, 700),
    ).toHaveLength(6);
    expect((await postForm(agent, `/organise/elections/${id}/open`, `/organise/elections/${id}/open`, { mode: 'now' })).status).toBe(303);

    const receipts: string[] = [];
    for (const [i, code] of codes.entries()) {
      const { receipt, cast } = await voteThrough(agentMember(request.agent(app)), id, code, [i % 3]);
      expect(cast.status, code).toBe(303);
      receipts.push(receipt!);
    }
    expect((await postForm(agent, `/organise/elections/${id}/close`, `/organise/elections/${id}/close`, {})).status).toBeLessThan(400);
    expect(
      (await postForm(agent, `/organise/elections/${id}/tally`, `/organise/elections/${id}/tally`, { passphrase: PASSPHRASE })).status,
    ).toBeLessThan(400);
    // The draw runs off the request: wait (bounded) until it is stored.
    const until = Date.now() + 90_000;
    while ((await db.knex('elections').where({ id }).first()).state === 'closed' && Date.now() < until) await new Promise((r) => setTimeout(r, 250));
    expect((await db.knex('elections').where({ id }).first()).state).toBe('tallied');
    clock.advance(2 * 60_000); // past the whole minute the drawn result stays hidden
    expect((await postForm(agent, `/organise/elections/${id}/publish`, `/organise/elections/${id}/publish`, { confirm: 'yes' })).status).toBeLessThan(
      400,
    );
    expect((await db.knex('elections').where({ id }).first()).state).toBe('published');

    const logText = log.join('');
    expect(logText.length).toBeGreaterThan(1000); // control: debug logging did record the requests
    const dump = execFileSync('pg_dump', ['--data-only', '-n', schema, process.env.TEST_DATABASE_URL!], {
      encoding: 'utf8',
      maxBuffer: 64 * 1024 * 1024,
    });
    expect(dump).toContain(id); // control: the dump holds this election
    const secrets = [
      PASSPHRASE,
      PASSWORD,
      sid,
      ...codes,
      ...codes.map((c) => c.replace(/-/g, '')),
      ...receipts,
      ...receipts.map((r) => r.replace(/-/g, '')),
    ];
    for (const s of secrets) {
      expect(logText.includes(s), `log holds a secret`).toBe(false);
      expect(dump.includes(s), `dump holds a secret`).toBe(false);
    }
    // Ballot content: no request body is logged at any level.
    expect(logText).not.toMatch(/"approve"|"body"|_csrf/);
    record('secrets in logs and dump', { requests: 0, lost: 0, duplicated: 0, serverErrors: 0 });
  });
});
