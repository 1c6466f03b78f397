import crypto from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { openDatabase, type Engine } from '../../../src/db/knex.ts';
import { migrateLatest } from '../../../src/db/migrate.ts';
import { castAll, createOrganiser, FIXTURE_PASSPHRASE, FIXTURE_PASSWORD, openElectionFixture } from '../../helpers/fixtures.ts';
import { testClock, testContext, testKeyDirectory } from '../../helpers/context.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { startServer } from '../../helpers/server.ts';

/**
 * The tally's duration depends on turnout, so it must reach no log line at any level. A real
 * server at LOG_LEVEL=debug runs an organiser's tally; afterwards no line may carry a duration
 * field, and no line may come from the tally itself (its time stamp against the request's would
 * be the duration). Numbers allowed in a line: the level, the time stamp, the pid and the status.
 */
const ALLOWED_NUMBERS = new Set(['level', 'time', 'pid', 'status']);

function cookiesOf(res: Response): string {
  return res.headers
    .getSetCookie()
    .map((c) => c.split(';')[0]!)
    .join('; ');
}

describe.each(engines)('no draw duration in the logs at debug level [%s]', (engine: Engine) => {
  const cleanups: Array<() => Promise<unknown>> = [];
  afterAll(async () => {
    for (const c of cleanups.reverse()) await c().catch(() => undefined);
  });

  it('a whole tally logs request lines only, none with a duration', async () => {
    const pepper = crypto.randomBytes(32);
    const env: Record<string, string> = { LOG_LEVEL: 'debug', VEILTALLY_CODE_PEPPER: pepper.toString('hex') };
    let dataDir: string | undefined;
    let db: TestDatabase;
    if (engine === 'postgres') {
      db = await freshDatabase('postgres');
      cleanups.push(() => db.dispose());
      const schema = (await db.knex.raw('select current_schema() as s')).rows[0].s as string;
      env.DATABASE_URL = `${process.env.TEST_DATABASE_URL}?options=${encodeURIComponent(`-c search_path=${schema}`)}`;
    } else {
      dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'vt-log-'));
      const d = openDatabase({ engine: 'pglite', dataDir });
      await migrateLatest(d.knex);
      db = { ...d, dispose: () => d.close() };
    }
    // The election is made and voted in on a clock an hour behind and closes now, so it has closed by
    // the time the server (on the real clock) reads it, however long casting took.
    const clock = testClock(new Date(Date.now() - 3_600_000));
    // The server opens the sealed ballots with the key files this test's context wrote.
    env.VEILTALLY_KEY_DIR = testKeyDirectory(db).dir;
    const ctx = testContext(db, { now: clock.now, secrets: { codePepper: pepper, signingSeed: crypto.randomBytes(32) } });
    const organiserId = await createOrganiser(ctx, 'secretary@boats.example');
    const closesAt = new Date();
    const f = await openElectionFixture(ctx, organiserId, { codes: 5, closesAt });
    await castAll(ctx, f, [[0], [1, 2], [2], []]);
    if (engine === 'pglite') await db.dispose();

    const server = await startServer(env, dataDir);
    cleanups.push(() => server.stop('SIGKILL'));
    const signIn = await fetch(`${server.url}/organise/sign-in`);
    let cookie = cookiesOf(signIn);
    const csrf = () =>
      fetch(`${server.url}/organise/elections/${f.id}/tally`, { headers: { cookie } }).then(
        async (r) => /name="_csrf" value="([^"]+)"/.exec(await r.text())![1]!,
      );
    const token = /name="_csrf" value="([^"]+)"/.exec(await signIn.text())![1]!;
    const signedIn = await fetch(`${server.url}/organise/sign-in`, {
      method: 'POST',
      body: new URLSearchParams({ _csrf: token, email: 'secretary@boats.example', password: FIXTURE_PASSWORD }),
      headers: { cookie },
      redirect: 'manual',
    });
    expect(signedIn.status).toBe(303);
    cookie = cookiesOf(signedIn) || cookie;
    const queued = await fetch(`${server.url}/organise/elections/${f.id}/tally`, {
      method: 'POST',
      body: new URLSearchParams({ _csrf: await csrf(), passphrase: FIXTURE_PASSPHRASE }),
      headers: { cookie },
      redirect: 'manual',
    });
    expect(queued.status).toBe(303);
    const drawing = await fetch(`${server.url}/organise/elections/${f.id}/tally`, { headers: { cookie } });
    expect(drawing.headers.get('refresh')).toBe('10');
    expect(await drawing.text()).toContain('Drawing the result');
    // The draw runs off the request, and the page says "drawing" until the result's whole minute.
    // On PostgreSQL the test asks the database until the draw has committed; the embedded database
    // is the server's alone while it runs, so there the test waits a fixed time the count needs.
    if (engine === 'postgres') {
      for (const deadline = Date.now() + 60_000; ;) {
        if ((await db.knex('elections').where({ id: f.id }).first('state')).state === 'tallied') break;
        if (Date.now() > deadline) throw new Error('the queued tally had not committed after 60 s');
        await new Promise((r) => setTimeout(r, 100));
      }
    } else {
      await new Promise((r) => setTimeout(r, 4000)); // the count of four ballots is done long before this
    }
    expect(await server.stop('SIGTERM')).toBe(0);

    const check = engine === 'postgres' ? db : openDatabase({ engine: 'pglite', dataDir: dataDir! });
    expect((await check.knex('elections').where({ id: f.id }).first('state')).state).toBe('tallied'); // control: the draw ran
    if (engine === 'pglite') await check.close();

    const lines = server
      .output()
      .split('\n')
      .filter((l) => l.trim().startsWith('{'))
      .map((l) => JSON.parse(l) as Record<string, unknown>);
    const requests = lines.filter((l) => l.msg === 'request');
    expect(requests.some((l) => l.method === 'POST' && String(l.path).endsWith('/tally'))).toBe(true); // control: debug lines were logged
    for (const line of lines) {
      for (const [key, value] of Object.entries(line)) {
        if (typeof value === 'number') expect(ALLOWED_NUMBERS.has(key), `${key} in ${JSON.stringify(line)}`).toBe(true);
        expect(key).not.toMatch(/^ms$|duration|elapsed|took|responseTime/i);
      }
      if (line.msg !== 'request') expect(String(line.msg).replace(/Veiltally/g, '')).not.toMatch(/tally|draw|count/i);
    }
  }, 120_000);
});
