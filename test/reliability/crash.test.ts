import { afterAll, describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { checkReceipt } from '../../src/elections/checkReceipt.ts';
import { REPO_ROOT, freePort, type RunningServer } from '../helpers/server.ts';
import {
  PG_URL,
  cast,
  contextFor,
  keyDirOf,
  countRows,
  launch,
  memberAddress,
  memberSession,
  pgliteTarget,
  postgresTarget,
  prepareElection,
  record,
  sharedSecrets,
  type Member,
  type Target,
} from './_harness.ts';

/**
 * Crash safety, checked the way a Jepsen set test checks acknowledged writes: 50 clients cast while
 * the server child is killed with SIGKILL at several points and restarted. Every receipt a client
 * was shown must be stored exactly once, spent codes must equal ballots, every replay of an
 * acknowledged code must be refused (or answered with the same receipt) without a new ballot, and
 * casting must resume after each restart.
 */
const CODES = 600;
const KILL_AFTER = [60, 200, 340]; // acknowledged casts before each SIGKILL
const CLIENTS = 50;

async function run(target: Target, label: string) {
  const secrets = { pepper: Buffer.from(target.env.VEILTALLY_CODE_PEPPER!, 'hex'), seed: Buffer.from(target.env.VEILTALLY_SIGNING_SEED!, 'hex') };
  const f = await prepareElection(target, secrets.pepper, secrets.seed, CODES);
  const acknowledged = new Map<string, string>(); // code -> receipt
  let requests = 0;
  let serverErrors = 0;
  let kills = 0;
  let next = 0;
  let server: RunningServer = await launch(target, { TRUST_PROXY: 'loopback' });

  const deadline = Date.now() + 200_000;
  for (let round = 0; round <= KILL_AFTER.length; round++) {
    const stopAt = KILL_AFTER[round] ?? CODES;
    const members: Member[] = await Promise.all(Array.from({ length: 5 }, (_x, c) => memberSession(server.url, f.id, memberAddress(c))));
    const controller = new AbortController();
    let killed = false;
    await Promise.all(
      Array.from({ length: CLIENTS }, async (_x, c) => {
        while (!killed && next < CODES && Date.now() < deadline) {
          const i = next++;
          const code = f.codes[i]!;
          requests++;
          try {
            const r = await cast(server.url, members[c % members.length]!, f.id, code, [i % 4], controller.signal);
            if (r.status >= 500) serverErrors++;
            if (r.status === 200 && r.receipt) acknowledged.set(code, r.receipt);
          } catch {
            // The connection died with the server: not acknowledged, so the client knows nothing.
          }
          if (!killed && round < KILL_AFTER.length && acknowledged.size >= stopAt) {
            killed = true;
            await server.stop('SIGKILL');
            kills++;
            controller.abort();
          }
        }
      }),
    );
    if (round < KILL_AFTER.length) {
      if (target.engine === 'pglite') {
        // While it is down, nothing else may take over its directory... and once a process holds it, a second is refused.
        server = await launch(target, { TRUST_PROXY: 'loopback' });
        const port = await freePort();
        const second = spawnSync(process.execPath, ['--import', 'tsx', 'src/main.ts'], {
          cwd: REPO_ROOT,
          env: { ...process.env, ...target.env, PORT: String(port), VEILTALLY_DATA_DIR: target.dataDir },
          encoding: 'utf8',
          timeout: 60_000,
        });
        expect(second.status).toBe(1);
        expect(second.stderr).toContain(`process ${server.child.pid}`);
      } else {
        server = await launch(target, { TRUST_PROXY: 'loopback' });
      }
    }
  }
  expect(next).toBe(CODES); // every code was tried within the time bound

  // Replays: every acknowledged code again. None may add a ballot.
  const member = await memberSession(server.url, f.id);
  let replayAccepted = 0;
  for (const [code, receipt] of [...acknowledged].slice(0, 150)) {
    requests++;
    const r = await cast(server.url, member, f.id, code, [0]);
    if (r.status >= 500) serverErrors++;
    if (r.status === 200 && r.receipt !== receipt) replayAccepted++;
  }
  // Casting resumes: an unused code? All were tried; resuming is shown by the rounds after each restart.
  await server.stop();

  const db = target.open();
  try {
    const ctx = contextFor(db, secrets.pepper, secrets.seed, keyDirOf(target));
    const ballots = await countRows(db, 'ballots', f.id);
    const spent = await countRows(db, 'ballot_codes', f.id, { spent: true });
    const receipts = await countRows(db, 'receipts', f.id);
    let lost = 0;
    for (const r of acknowledged.values()) if (!(await checkReceipt(ctx, { electionId: f.id, receipt: r }))) lost++;
    const duplicated = ballots - spent + (receipts - ballots);
    record(`crash safety, ${label}`, {
      requests,
      accepted: acknowledged.size,
      rejected: requests - acknowledged.size,
      lost,
      duplicated,
      serverErrors,
      killsSurvived: kills,
    });
    expect(lost).toBe(0);
    expect(spent).toBe(ballots);
    expect(receipts).toBe(ballots);
    expect(ballots).toBeGreaterThanOrEqual(acknowledged.size);
    expect(replayAccepted).toBe(0);
    expect(serverErrors).toBe(0);
    expect(kills).toBe(KILL_AFTER.length);
    // Casting resumed after the last restart: acknowledgements beyond the last kill point.
    expect(acknowledged.size).toBeGreaterThan(KILL_AFTER.at(-1)!);
  } finally {
    await db.close();
  }
}

describe.runIf(PG_URL)('crash safety [postgres]', () => {
  let target: Target;
  afterAll(() => target?.dispose());
  it('survives SIGKILL at three points under 50 casting clients', async () => {
    target = await postgresTarget(sharedSecrets().env);
    await run(target, 'postgres');
  });
});

describe('crash safety [pglite]', () => {
  let target: Target;
  afterAll(() => target?.dispose());
  it('survives SIGKILL at three points under 50 casting clients; a second process on the directory is refused', async () => {
    target = pgliteTarget(sharedSecrets().env);
    await run(target, 'embedded');
  });
});
