import { Worker } from 'node:worker_threads';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { migrateLatest } from '../../src/db/migrate.ts';
import { publishResult } from '../../src/elections/publishResult.ts';
import { castAll, createOrganiser, openElectionFixture, tallyFixture } from '../helpers/fixtures.ts';
import type { RunningServer } from '../helpers/server.ts';
import {
  PG_URL,
  contextFor,
  keyDirOf,
  launch,
  memberAddress,
  pgliteTarget,
  postgresTarget,
  prepareElection,
  record,
  sharedSecrets,
  type Target,
} from './_harness.ts';

/**
 * One client floods one public page at a time over 16 connections, for each of eight kinds of
 * public page (the home page, the "Choosing ε" tables with the largest settings and a new setting
 * on every other request, a ballot's code page, a published result, its minutes, its signed
 * statement, the verify page and a group's privacy ledger), while members, each from their own
 * address, read their ballot pages two at a time. For every kind, the members' p99 under the flood must
 * stay within 2× of their p99 with the server idle (src/web/middleware/fairShare.ts: each client's
 * pages are read in its own turn). The flooder runs on its own thread, so its own reading of
 * answers does not slow the members' clock. Addresses come through X-Forwarded-For from loopback.
 */
const SAMPLES = 600;
const ROUNDS = 3;
const FLOOD_CONNECTIONS = 16;
const FLOODER_ADDRESS = '203.0.113.66';

function p99(ms: number[]): number {
  const sorted = [...ms].sort((a, b) => a - b);
  return sorted[Math.min(sorted.length - 1, Math.ceil(sorted.length * 0.99) - 1)]!;
}

/** The next member to read. */
let reader = 0;

/**
 * Members' page reads, two at a time, each read from another member's address (many members each
 * reading their ballot page, none of them near their own pace); the time each took.
 */
async function memberReads(base: string, electionId: string, count: number): Promise<{ ms: number[]; serverErrors: number }> {
  const ms: number[] = [];
  let serverErrors = 0;
  await Promise.all(
    [0, 1].map(async (b) => {
      for (let i = b; i < count; i += 2) {
        const t = performance.now();
        const res = await fetch(`${base}/vote/${electionId}`, { headers: { 'x-forwarded-for': memberAddress(1 + (reader++ % 60_000)) } });
        await res.arrayBuffer();
        ms.push(performance.now() - t);
        if (res.status >= 500) serverErrors++;
        else expect(res.status).toBe(200);
      }
    }),
  );
  return { ms, serverErrors };
}

/** The flooder on its own thread: requests `path` (or the ε tables) until told to stop, then posts its counts by status. */
const FLOODER = `
const { parentPort, workerData } = require('node:worker_threads');
const { base, connections, path, address } = workerData;
let stop = false;
const statuses = {};
parentPort.on('message', () => { stop = true; });
let n = 0;
function next(c) {
  if (path !== 'epsilon') return path;
  const i = n++;
  // Half the connections ask for a setting nobody asked for before, every time; the others for the largest one again and again.
  const fresh = c % 2 === 1;
  const seats = fresh ? 1 + (i % 98) : 99;
  const epsilon = fresh ? (0.01 + ((i * 7919) % 99000) / 10000).toFixed(4) : '0.01';
  return '/help/choosing-epsilon?options=100&seats=' + seats + '&epsilon=' + epsilon;
}
async function one(_x, c) {
  while (!stop) {
    try {
      const res = await fetch(base + next(c), { headers: { 'x-forwarded-for': address } });
      await res.arrayBuffer();
      statuses[res.status] = (statuses[res.status] || 0) + 1;
    } catch {
      statuses.failed = (statuses.failed || 0) + 1;
    }
  }
}
Promise.all(Array.from({ length: connections }, one)).then(() => parentPort.postMessage(statuses));
`;

const targets = ['pglite', ...(PG_URL ? ['postgres'] : [])] as const;

describe.each(targets)('public pages flooded by one client [%s]', (engine) => {
  const secrets = sharedSecrets();
  let target: Target;
  let server: RunningServer;
  let electionId: string;
  let kinds: Array<{ kind: string; path: string }>;

  beforeAll(async () => {
    target = engine === 'postgres' ? await postgresTarget(secrets.env) : pgliteTarget(secrets.env);
    electionId = (await prepareElection(target, secrets.pepper, secrets.seed, 1)).id;
    // A published result: voted two days ago, counted three minutes ago (so its draw's minute has passed), published now.
    const db = target.open();
    let resultId: string;
    let groupId: string;
    try {
      await migrateLatest(db.knex);
      const real = contextFor(db, secrets.pepper, secrets.seed, keyDirOf(target));
      const organiserId = (await db.knex('organisers').first('id'))?.id ?? (await createOrganiser(real));
      const twoDaysAgo = { ...real, now: () => new Date(Date.now() - 2 * 24 * 3600_000) };
      const f = await openElectionFixture(twoDaysAgo, organiserId, {
        title: 'Which repairs first',
        options: [{ label: 'Lift' }, { label: 'Roof' }, { label: 'Boiler' }, { label: 'Intercom' }],
        codes: 8,
        closesAt: new Date(Date.now() - 24 * 3600_000),
      });
      await castAll(twoDaysAgo, f, [[0, 1], [1], [2, 3], [1, 2], [0]]);
      await tallyFixture({ ...real, now: () => new Date(Date.now() - 180_000) }, f, false);
      await publishResult(real, { electionId: f.id, organiserId });
      resultId = f.id;
      groupId = String((await db.knex('privacy_ledger').where({ election_id: f.id }).first('group_id')).group_id);
    } finally {
      await db.close();
    }
    kinds = [
      { kind: 'home page', path: '/' },
      { kind: 'Choosing ε tables', path: 'epsilon' },
      { kind: 'ballot code page', path: `/vote/${electionId}` },
      { kind: 'published result', path: `/results/${resultId}` },
      { kind: 'result minutes', path: `/results/${resultId}/minutes` },
      { kind: 'signed statement', path: `/results/${resultId}/statement.json` },
      { kind: 'verify page', path: '/verify' },
      { kind: 'privacy ledger', path: `/groups/${groupId}/ledger` },
    ];
    server = await launch(target, { TRUST_PROXY: 'loopback' });
  });
  afterAll(async () => {
    await server?.stop();
    await target?.dispose();
  });

  it(`members' ballot pages stay within 2× of their idle p99 while one client floods each of 8 public pages over ${FLOOD_CONNECTIONS} connections`, async () => {
    // Every page the flood will ask for answers 200 when asked once, from another address.
    for (const { kind, path } of kinds) {
      const url = path === 'epsilon' ? '/help/choosing-epsilon?options=100&seats=99&epsilon=0.01' : path;
      const res = await fetch(server.url + url, { headers: { 'x-forwarded-for': '192.0.2.9' } });
      await res.arrayBuffer();
      expect(res.status, kind).toBe(200);
    }
    await memberReads(server.url, electionId, 40); // warm-up: compiled views, first queries

    const rows: Array<{ kind: string; floodedP99: number; statuses: Record<string, number> }> = [];
    // The members' idle p99 is taken over every idle window of the run (8 × 600 reads), interleaved with the floods.
    const idle: number[] = [];
    let memberErrors = 0;
    for (const { kind, path } of kinds) {
      // Idle and flooded windows take turns, so a change in the machine's other load falls on both alike.
      const flooded: number[] = [];
      const statuses: Record<string, number> = {};
      for (let round = 0; round < ROUNDS; round++) {
        const quiet = await memberReads(server.url, electionId, SAMPLES / ROUNDS);
        idle.push(...quiet.ms);
        memberErrors += quiet.serverErrors;

        const flooder = new Worker(FLOODER, {
          eval: true,
          workerData: { base: server.url, connections: FLOOD_CONNECTIONS, path, address: FLOODER_ADDRESS },
        });
        const counts = new Promise<Record<string, number>>((resolve, reject) => {
          flooder.once('message', resolve);
          flooder.once('error', reject);
        });
        await new Promise((r) => setTimeout(r, 1_000)); // the flood under way first
        const busy = await memberReads(server.url, electionId, SAMPLES / ROUNDS);
        flooder.postMessage('stop');
        for (const [k, n] of Object.entries(await counts)) statuses[k] = (statuses[k] ?? 0) + n;
        await flooder.terminate();
        flooded.push(...busy.ms);
        memberErrors += busy.serverErrors;
      }
      rows.push({ kind, floodedP99: p99(flooded), statuses });
      process.stdout.write(`flood [${engine}] ${kind}: ${JSON.stringify(statuses)}; members' p99 flooded ${p99(flooded).toFixed(1)} ms\n`);
    }
    const idleP99 = p99(idle);
    process.stdout.write(`flood [${engine}]: members' p99 idle ${idleP99.toFixed(1)} ms over ${idle.length} reads\n`);

    const total = (pick: (s: Record<string, number>) => number) => rows.reduce((a, r) => a + pick(r.statuses), 0);
    const sent = total((s) => Object.values(s).reduce((a, b) => a + b, 0));
    const floodErrors = total((s) =>
      Object.entries(s)
        .filter(([k]) => Number(k) >= 500)
        .reduce((a, [, n]) => a + n, 0),
    );
    const worst = rows.reduce((w, r) => (r.floodedP99 > w.floodedP99 ? r : w));
    record(`public-page flood, 8 pages, ${engine}`, {
      requests: sent,
      accepted: total((s) => s['200'] ?? 0),
      rejected: total((s) => s['429'] ?? 0),
      serverErrors: floodErrors + memberErrors,
      note: `members' p99 ${idleP99.toFixed(1)} ms idle, ${worst.floodedP99.toFixed(1)} ms at worst flooded (${worst.kind}, ${(worst.floodedP99 / idleP99).toFixed(2)}×)`,
    });
    expect(total((s) => s.failed ?? 0)).toBe(0);
    expect(floodErrors + memberErrors).toBe(0);
    for (const r of rows) expect(r.floodedP99, `${r.kind}: members' idle p99 ${idleP99.toFixed(1)} ms`).toBeLessThanOrEqual(2 * idleP99);
  });
});
