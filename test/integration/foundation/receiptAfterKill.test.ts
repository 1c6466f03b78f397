import crypto from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { openDatabase, type Engine } from '../../../src/db/knex.ts';
import { migrateLatest } from '../../../src/db/migrate.ts';
import { testContext, testKeyDirectory } from '../../helpers/context.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { createOrganiser, openElectionFixture } from '../../helpers/fixtures.ts';
import { startServer, type RunningServer } from '../../helpers/server.ts';
import { CookieJar, fetchMember, hiddenFields, toConfirm } from '../../helpers/memberWalk.ts';

/**
 * A real server child process is killed with SIGKILL while many members are casting, then
 * started again on the same database. Every member whose answer was lost sends the same
 * cast again (same step cookie, same one-time cast token) and must get a receipt: the same
 * one if the first cast had committed, a fresh cast otherwise. Nothing is cast twice.
 */
const MEMBERS = 40;

interface Member {
  jar: CookieJar;
  form: { action: string; fields: [string, string][] };
  answered: boolean;
}

function cookiesOf(res: Response): string[] {
  return res.headers.getSetCookie().map((c) => c.split(';')[0]!);
}

/** Walks one member to the read-back page; the browser then holds the step cookie with its cast token. */
async function prepare(url: string, electionId: string, code: string, option: number): Promise<Member> {
  const m = fetchMember(url);
  const confirm = await toConfirm(m, electionId, code, [option]);
  return { jar: m.jar, form: hiddenFields(confirm.text, '/cast'), answered: false };
}

/**
 * Sends the cast as the browser holds it at the read-back; on 303 follows to the receipt page with the
 * receipt cookie and returns the receipt. The member's jar is not updated: a lost answer leaves the
 * browser as it was, and the retry sends the same step cookie (the same cast token) again.
 */
async function cast(url: string, electionId: string, m: Member): Promise<string> {
  const res = await fetch(`${url}${m.form.action}`, {
    method: 'POST',
    body: new URLSearchParams(m.form.fields),
    headers: { cookie: m.jar.header() },
    redirect: 'manual',
  });
  if (res.status !== 303) throw new Error(`cast gave ${res.status}`);
  const receiptCookie = cookiesOf(res).join('; ');
  const page = await fetch(`${url}${res.headers.get('location')}`, { headers: { cookie: `${m.jar.header()}; ${receiptCookie}` } });
  const receipt = /<p class="receipt">([0-9A-Z-]{11})<\/p>/.exec(await page.text())?.[1];
  if (!receipt) throw new Error(`receipt page gave ${page.status}`);
  return receipt;
}

describe.each(engines)('receipt after SIGKILL of a real server [%s]', (engine: Engine) => {
  const cleanups: Array<() => Promise<unknown>> = [];
  afterAll(async () => {
    for (const c of cleanups.reverse()) await c().catch(() => undefined);
  });

  it('every member whose answer was lost gets a receipt by sending the same confirmation again', async () => {
    const pepper = crypto.randomBytes(32);
    const seed = crypto.randomBytes(32);
    // The server must hold the same instance secrets as the setup: instances sharing a database check that they agree.
    const env: Record<string, string> = {
      VEILTALLY_CODE_PEPPER: pepper.toString('hex'),
      VEILTALLY_SIGNING_SEED: seed.toString('hex'),
      SESSION_SECRET: crypto.randomBytes(24).toString('hex'),
    };
    let dataDir: string | undefined;
    let setupDb: TestDatabase | undefined;
    let knex;
    if (engine === 'postgres') {
      setupDb = await freshDatabase('postgres');
      cleanups.push(() => setupDb!.dispose());
      const schema = (await setupDb.knex.raw('select current_schema() as s')).rows[0].s as string;
      env.DATABASE_URL = `${process.env.TEST_DATABASE_URL}?options=${encodeURIComponent(`-c search_path=${schema}`)}`;
      knex = setupDb;
    } else {
      dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'vt-kill-'));
      const db = openDatabase({ engine: 'pglite', dataDir });
      await migrateLatest(db.knex);
      knex = { ...db, dispose: () => db.close() };
    }
    // The server opens the sealed ballots with the key files this test's context wrote.
    env.VEILTALLY_KEY_DIR = testKeyDirectory(knex).dir;
    const ctx = testContext(knex, { secrets: { codePepper: pepper, signingSeed: seed } });
    const organiserId = await createOrganiser(ctx);
    const f = await openElectionFixture(ctx, organiserId, { codes: MEMBERS });
    if (engine === 'pglite') await knex.dispose(); // one process per embedded directory

    let server: RunningServer = await startServer(env, dataDir);
    cleanups.push(() => server.stop('SIGKILL'));
    const members = await Promise.all(f.codes.map((code, i) => prepare(server.url, f.id, code, i % 4)));

    // All cast at once; the server is killed while they are in flight.
    const inFlight = members.map((m) =>
      cast(server.url, f.id, m).then(
        (r) => ((m.answered = true), r),
        () => null,
      ),
    );
    // Kill once some casts have committed while others are still in flight: on PostgreSQL when the
    // database shows ballots, on the embedded database (one process per directory) at the first answer.
    const deadline = Date.now() + 20_000;
    for (;;) {
      if (Date.now() > deadline) throw new Error('no cast committed within 20 s');
      if (engine === 'postgres') {
        const c = await setupDb!.knex('ballots').where({ election_id: f.id }).count({ n: '*' }).first();
        if (Number(c!.n) >= 3) break;
      } else if (members.some((m) => m.answered)) break;
      await new Promise((r) => setTimeout(r, 2));
    }
    server.child.kill('SIGKILL');
    const first = await Promise.all(inFlight);
    await server.stop();
    let committedAtKill: number | null = null;
    if (engine === 'postgres') {
      const c = await setupDb!.knex('ballots').where({ election_id: f.id }).count({ n: '*' }).first();
      committedAtKill = Number(c!.n);
      // Control: the kill did swallow answers of casts that had committed, which is the case under test.
      expect(committedAtKill).toBeGreaterThan(members.filter((m) => m.answered).length);
    }

    server = await startServer(env, dataDir);
    const lost = members.filter((m) => !m.answered);
    const retried = await Promise.all(lost.map((m) => cast(server.url, f.id, m)));
    const receipts = [...first.filter((r): r is string => r !== null), ...retried];
    expect(receipts).toHaveLength(MEMBERS);
    expect(new Set(receipts).size).toBe(MEMBERS);
    await server.stop();

    // Exactly one ballot per member, however many were cast before the kill.
    const check = engine === 'postgres' ? setupDb! : openDatabase({ engine: 'pglite', dataDir: dataDir! });
    const n = await check.knex('ballots').where({ election_id: f.id }).count({ n: '*' }).first();
    expect(Number(n!.n)).toBe(MEMBERS);
    const spent = await check.knex('ballot_codes').where({ election_id: f.id, spent: true }).count({ n: '*' }).first();
    expect(Number(spent!.n)).toBe(MEMBERS);
    if (engine === 'pglite') await check.close();
    // Figure for the report: how many answers the kill swallowed.
    const answered = MEMBERS - lost.length;
    console.log(
      `[${engine}] at the kill: ${answered} answered, ${committedAtKill ?? 'unknown'} committed, ` +
        `${committedAtKill === null ? '?' : committedAtKill - answered} committed but unanswered; every one of the ${lost.length} retries got a receipt`,
    );
  }, 120_000);
});
