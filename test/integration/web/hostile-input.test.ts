import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { Writable } from 'node:stream';
import type { Express } from 'express';
import { loadConfig } from '../../../src/config.ts';
import { createLogger } from '../../../src/log.ts';
import { createApp } from '../../../src/web/app.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { openElectionFixture, type ElectionFixture } from '../../helpers/fixtures.ts';
import { encode, makeOrganiser, organiseContext, signedIn, tokenIn } from './organiseSupport.ts';

/**
 * Bad input gets a clear 4xx page and nothing at error level in the log: bad percent-encoding,
 * NUL bytes, arrays where one value belongs, missing and repeated fields, over-long values.
 */
describe.each(engines)('hostile input [%s]', (engine) => {
  let db: TestDatabase;
  let ctx: UseCaseContext;
  let app: Express;
  let f: ElectionFixture;
  let email: string;
  const logged: Array<{ level: number; msg: string }> = [];

  beforeAll(async () => {
    db = await freshDatabase(engine);
    ctx = organiseContext(db);
    const sink = new Writable({
      write(chunk, _enc, cb) {
        for (const line of String(chunk).split('\n')) if (line) logged.push(JSON.parse(line));
        cb();
      },
    });
    const config = loadConfig({ VEILTALLY_DATA_DIR: '/nonexistent-test-dir' });
    app = createApp({ config, ctx, logger: createLogger('debug', sink), sessionSecret: 'test-session-secret-0123456789abcdef' });
    email = (await makeOrganiser(ctx)).email;
    const organiserId = (await ctx.knex('organisers').where({ email }).first('id')).id;
    f = await openElectionFixture(ctx, organiserId);
  });
  afterAll(() => db?.dispose());

  const errorsLogged = () => logged.filter((l) => l.level >= 50);

  it('answers bad percent-encoding in any path with 400, not 500', async () => {
    const agent = await signedIn(app, email);
    for (const p of [
      '/vote/%E0%A4%A',
      `/vote/%E0%A4%A/ballot`,
      '/results/%E0%A4%A',
      '/results/%ZZ/receipt',
      '/organise/elections/%E0%A4%A',
      '/organise/elections/%C0/edit',
      '/%E0%A4%A',
    ]) {
      const res = await agent.get(p);
      expect(res.status, p).toBeGreaterThanOrEqual(400);
      expect(res.status, p).toBeLessThan(500);
      expect(res.text, p).not.toContain('URIError');
    }
    expect(errorsLogged()).toEqual([]);
  });

  it('answers NUL bytes, arrays, missing and repeated fields and over-long values with 4xx', async () => {
    const agent = await signedIn(app, email);
    const page = await agent.get('/organise/elections/new');
    const csrf = tokenIn(page.text);
    const long = 'x'.repeat(200_000);
    const cases: Array<[string, Record<string, string | string[]>]> = [
      ['/organise/sign-in', { email: 'a\u0000@rowing.example', password: 'x' }],
      ['/organise/sign-in', { email: ['a@rowing.example', 'b@rowing.example'], password: ['x', 'y'] }],
      ['/organise/sign-in/resume', { email: 'a@rowing.example', password: 'x' }],
      ['/organise/sign-in/resume', { email: 'a@rowing.example', password: 'x', resumeTo: ['/organise', '/organise/elections/new'] }],
      ['/organise/elections/new', { title: 'Boat\u0000name', optionLabel: ['A', 'B'], intent: 'save' }],
      ['/organise/elections/new', { title: 'Boat', optionLabel: ['A\u0000', 'B'], intent: 'save' }],
      ['/organise/elections/new', { title: ['A', 'B'], optionLabel: 'A', intent: ['save', 'open'] }],
      ['/organise/elections/new', { title: long.slice(0, 100_000), intent: 'save' }],
      ['/organise/organisers', { email: 'x\u0000@y.example', password: 'p\u0000' }],
      [`/organise/elections/${f.id}/codes`, { count: ['1', '2'] }],
      [`/organise/elections/${f.id}/codes/revoke`, { code: 'ab\u0000' }],
      [`/organise/elections/${f.id}/tally`, { passphrase: ['a', 'b'] }],
      [`/vote/${f.id}/ballot`, { code: ['a', 'b'] }],
      [`/vote/${f.id}/cast`, { code: 'x\u0000', approve: ['0', '0', '\u0000'], readBack: ['a', '\u0000'] }],
      [`/vote/${f.id}/confirm`, { code: long.slice(0, 50_000), approve: ['0', '0', '\u0000'] }],
      [`/vote/${f.id}/confirm`, { approve: long.slice(0, 50_000) }],
      [`/results/${f.id}/receipt`, { receipt: ['a', 'b'] }],
    ];
    for (const [path, fields] of cases) {
      const res = await agent
        .post(path)
        .type('form')
        .send(encode({ ...fields, _csrf: csrf }));
      expect(res.status, `${path} ${JSON.stringify(fields).slice(0, 80)}`).toBeLessThan(500);
    }
    expect(errorsLogged()).toEqual([]);
  });

  it('writes no session row for anonymous page views or member forms; signing in makes one', async () => {
    const before = Number((await ctx.knex('sessions').count({ n: '*' }))[0]!.n);
    for (let i = 0; i < 5; i++) {
      await request(app).get(`/vote/${f.id}`).expect(200);
      await request(app).get(`/results/${f.id}`);
      await request(app).get('/organise/sign-in').expect(200);
    }
    const member = request.agent(app);
    const start = await member.get(`/vote/${f.id}`).expect(200);
    await member
      .post(`/vote/${f.id}/ballot`)
      .type('form')
      .send(encode({ _csrf: tokenIn(start.text), code: f.codes[0]! }))
      .expect(303);
    await member.get(`/vote/${f.id}/ballot`).expect(200);
    expect(Number((await ctx.knex('sessions').count({ n: '*' }))[0]!.n)).toBe(before);
    await signedIn(app, email);
    expect(Number((await ctx.knex('sessions').count({ n: '*' }))[0]!.n)).toBe(before + 1);
  });
});
