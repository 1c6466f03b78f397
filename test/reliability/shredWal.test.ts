import { afterAll, describe, expect, it } from 'vitest';
import { openUnderShredKey } from '../../src/custody/index.ts';
import { migrateLatest } from '../../src/db/migrate.ts';
import { rewriteShreddedTables } from '../../src/elections/shred.ts';
import { keyDirectory } from '../../src/keyfiles/keyDirectory.ts';
import { TEST_KDF } from '../helpers/context.ts';
import { csrfOf } from '../helpers/memberWalk.ts';
import { FIXTURE_PASSPHRASE, FIXTURE_PASSWORD, createOrganiser, openElectionFixture } from '../helpers/fixtures.ts';
import type { RunningServer } from '../helpers/server.ts';
import { carve, pgliteWal, postgresWal } from '../integration/custody/_walCarve.ts';
import {
  PG_URL,
  cast,
  contextFor,
  keyDirOf,
  launch,
  memberSession,
  pgliteTarget,
  postgresTarget,
  record,
  sharedSecrets,
  type Target,
} from './_harness.ts';

/**
 * The shred against the write-ahead log, end to end through a real server process: members cast
 * over HTTP, the organiser tallies and publishes (the shred happens at publication), the server
 * stops, and a thief carves the WAL's bytes (test/integration/custody/_walCarve.ts) with the tally
 * passphrase. Nothing may open. Control: a copy of the key file taken before the shred opens every
 * ballot the carve finds, so the carve does reach the ballots' bytes.
 */
const EMAIL = 'organiser@rowing.example';
const BALLOTS = 6;

const cookiesOf = (res: Response) => (res.headers.getSetCookie?.() ?? []).map((c) => c.split(';')[0]).join('; ');

async function signIn(base: string): Promise<string> {
  const page = await fetch(`${base}/organise/sign-in`);
  const cookie = cookiesOf(page);
  const res = await fetch(`${base}/organise/sign-in`, {
    method: 'POST',
    redirect: 'manual',
    headers: { 'content-type': 'application/x-www-form-urlencoded', cookie },
    body: new URLSearchParams({ _csrf: csrfOf(await page.text()), email: EMAIL, password: FIXTURE_PASSWORD }),
  });
  await res.arrayBuffer();
  if (res.status !== 303) throw new Error(`sign-in gave ${res.status}`);
  return [cookie, cookiesOf(res)].filter(Boolean).join('; ');
}

async function page(base: string, cookie: string, path: string) {
  const res = await fetch(`${base}${path}`, { headers: { cookie } });
  return { status: res.status, html: await res.text() };
}

async function post(base: string, cookie: string, path: string, fields: Record<string, string>) {
  const res = await fetch(`${base}${path}`, {
    method: 'POST',
    redirect: 'manual',
    headers: { 'content-type': 'application/x-www-form-urlencoded', cookie },
    body: new URLSearchParams(fields),
  });
  await res.arrayBuffer();
  return res.status;
}

async function run(target: Target, secrets: ReturnType<typeof sharedSecrets>, label: string) {
  let requests = 0;
  let serverErrors = 0;
  const count = (status: number) => {
    requests++;
    if (status >= 500) serverErrors++;
    return status;
  };

  let db = target.open();
  let election: Awaited<ReturnType<typeof openElectionFixture>>;
  try {
    await migrateLatest(db.knex);
    const ctx = contextFor(db, secrets.pepper, secrets.seed, keyDirOf(target));
    const organiserId = await createOrganiser(ctx);
    const now = Date.now();
    election = await openElectionFixture(ctx, organiserId, { opensAt: new Date(now), closesAt: new Date(now + 30 * 60_000), codes: BALLOTS });
  } finally {
    await db.close();
  }
  const id = election.id;
  const optionCount = election.options.length;

  // Members cast through the pages of a real server process.
  let server: RunningServer = await launch(target);
  let accepted = 0;
  try {
    for (const [i, code] of election.codes.entries()) {
      const m = await memberSession(server.url, id);
      const r = await cast(server.url, m, id, code, [i % optionCount, (i + 2) % optionCount]);
      count(r.status);
      if (r.status === 200 && r.receipt) accepted++;
    }
  } finally {
    await server.stop();
  }
  expect(accepted).toBe(BALLOTS);

  // Voting closes (the closing time moved into the past; the embedded directory is free while no server runs).
  db = target.open();
  try {
    await db
      .knex('elections')
      .where({ id })
      .update({ closes_at: new Date(Date.now() - 1000) });
  } finally {
    await db.close();
  }

  const keys = keyDirectory(keyDirOf(target));
  let keyBackup: Buffer | undefined;
  server = await launch(target);
  try {
    const cookie = await signIn(server.url);
    const tally = await page(server.url, cookie, `/organise/elections/${id}/tally`);
    count(tally.status);
    expect(
      count(await post(server.url, cookie, `/organise/elections/${id}/tally`, { _csrf: csrfOf(tally.html), passphrase: FIXTURE_PASSPHRASE })),
    ).toBe(303);
    const until = Date.now() + 150_000;
    let drawn = false;
    while (!drawn && Date.now() < until) {
      const p = await page(server.url, cookie, `/organise/elections/${id}/tally`);
      count(p.status);
      drawn = p.html.includes('Publish');
      if (!drawn) await new Promise((r) => setTimeout(r, 1000));
    }
    expect(drawn).toBe(true);

    // What a backup of the key directory taken now, before the shred, would hold.
    expect(await keys.has(id)).toBe(true);
    keyBackup = await keys.read(id);

    const publish = await page(server.url, cookie, `/organise/elections/${id}/publish`);
    count(publish.status);
    expect(count(await post(server.url, cookie, `/organise/elections/${id}/publish`, { _csrf: csrfOf(publish.html), confirm: 'yes' }))).toBe(303);
    expect(await keys.has(id)).toBe(false);
  } finally {
    await server.stop();
  }

  // The thief's copy of the WAL, after the shred.
  let wal: Buffer;
  db = target.open();
  try {
    const row = await db.knex('elections').where({ id }).first();
    expect(row.state).toBe('published');
    if (target.engine === 'postgres') {
      // The table rewrite the shred asks for; the server tried it at publication, housekeeping retries.
      const until = Date.now() + 60_000;
      while ((await rewriteShreddedTables(db.knex, 2_000)) === 'deferred' && Date.now() < until);
      wal = await postgresWal({ ...db, dispose: () => db.close() });
    }
  } finally {
    await db.close();
  }
  if (target.engine === 'pglite') wal = pgliteWal(target.dataDir);

  const base = { wal: wal!, electionId: id, optionCount, passphrase: FIXTURE_PASSPHRASE, kdf: TEST_KDF };
  const passphraseOnly = await carve(base);
  const key = keyBackup!;
  const withKeyBackup = await carve({ ...base, outer: { open: (kind, bytes) => openUnderShredKey(key, id, kind, bytes) } });
  process.stdout.write(
    `[${label}] WAL ${(wal!.length / 2 ** 20).toFixed(0)} MiB carved after the shred: passphrase only ${JSON.stringify(passphraseOnly)}, ` +
      `with the key file from before ${JSON.stringify(withKeyBackup)}\n`,
  );
  record(`shred against the write-ahead log, ${label}`, {
    requests,
    accepted,
    rejected: BALLOTS - accepted, // casts refused (every other request is the organiser's pages)
    serverErrors,
    note: `${passphraseOnly.ballotCandidates} ballot-shaped strings carved from the WAL after the shred; with the passphrase ${passphraseOnly.keysOpened} keys and ${passphraseOnly.ballotsOpened} ballots opened; with the key file copied before the shred ${withKeyBackup.keysOpened} key and ${withKeyBackup.ballotsOpened} of ${BALLOTS} ballots`,
  });

  // Control: the carve reaches the ballots' bytes, and the key file from before the shred opens them all.
  expect(passphraseOnly.ballotCandidates).toBeGreaterThanOrEqual(BALLOTS);
  expect(withKeyBackup).toMatchObject({ keysOpened: 1, ballotsOpened: BALLOTS });
  // The shred: with the passphrase alone, nothing opens.
  expect(passphraseOnly).toMatchObject({ keysOpened: 0, ballotsOpened: 0 });
  expect(serverErrors).toBe(0);
}

describe.runIf(PG_URL)('a shred holds against the write-ahead log [postgres]', () => {
  let target: Target;
  afterAll(() => target?.dispose());
  it('cast, tallied and published through a server process: nothing carved from the WAL opens with the passphrase', async () => {
    const secrets = sharedSecrets();
    target = await postgresTarget(secrets.env);
    await run(target, secrets, 'postgres');
  });
});

describe('a shred holds against the write-ahead log [pglite]', () => {
  let target: Target;
  afterAll(() => target?.dispose());
  it('cast, tallied and published through a server process: nothing carved from the WAL opens with the passphrase', async () => {
    const secrets = sharedSecrets();
    target = pgliteTarget(secrets.env);
    await run(target, secrets, 'embedded');
  });
});
