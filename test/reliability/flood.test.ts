import { Worker } from 'node:worker_threads';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunningServer } from '../helpers/server.ts';
import { PG_URL, launch, pgliteTarget, postgresTarget, prepareElection, record, sharedSecrets, type Target } from './_harness.ts';

/**
 * One client floods a public page that is computed from its query (the "Choosing ε" tables, with
 * the largest settings, and half of its 16 connections asking for a new setting every time) while
 * members read their ballot pages. The members' p99 under the flood must stay within 2× of their
 * p99 with the server idle. The flooder runs on its own thread, so its own reading of answers does
 * not slow the members' clock.
 */
const SAMPLES = 360;
const ROUNDS = 3;
const FLOOD_CONNECTIONS = 16;

function p99(ms: number[]): number {
  const sorted = [...ms].sort((a, b) => a - b);
  return sorted[Math.min(sorted.length - 1, Math.ceil(sorted.length * 0.99) - 1)]!;
}

/** Members' page reads, one after another from two browsers; the time each took. */
async function memberReads(base: string, electionId: string, count: number): Promise<{ ms: number[]; serverErrors: number }> {
  const ms: number[] = [];
  let serverErrors = 0;
  await Promise.all(
    [0, 1].map(async (b) => {
      for (let i = b; i < count; i += 2) {
        const t = performance.now();
        const res = await fetch(`${base}/vote/${electionId}`);
        await res.arrayBuffer();
        ms.push(performance.now() - t);
        if (res.status >= 500) serverErrors++;
        else expect(res.status).toBe(200);
      }
    }),
  );
  return { ms, serverErrors };
}

/** The flooder on its own thread: requests until told to stop, then posts its counts by status. */
const FLOODER = `
const { parentPort, workerData } = require('node:worker_threads');
const { base, connections } = workerData;
let stop = false;
const statuses = {};
parentPort.on('message', () => { stop = true; });
let n = 0;
async function one(_x, c) {
  while (!stop) {
    const i = n++;
    // Half the connections ask for a setting nobody asked for before, every time; the others for the largest one again and again.
    const fresh = c % 2 === 1;
    const seats = fresh ? 1 + (i % 98) : 99;
    const epsilon = fresh ? (0.01 + ((i * 7919) % 99000) / 10000).toFixed(4) : '0.01';
    try {
      const res = await fetch(base + '/help/choosing-epsilon?options=100&seats=' + seats + '&epsilon=' + epsilon);
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

describe.each(targets)('a public page flooded by one client [%s]', (engine) => {
  const secrets = sharedSecrets();
  let target: Target;
  let server: RunningServer;
  let electionId: string;

  beforeAll(async () => {
    target = engine === 'postgres' ? await postgresTarget(secrets.env) : pgliteTarget(secrets.env);
    electionId = (await prepareElection(target, secrets.pepper, secrets.seed, 1)).id;
    server = await launch(target);
  });
  afterAll(async () => {
    await server?.stop();
    await target?.dispose();
  });

  it(`members' ballot pages stay within 2× of their idle p99 while one client floods the ε help page over ${FLOOD_CONNECTIONS} connections`, async () => {
    await memberReads(server.url, electionId, 40); // warm-up: compiled views, first queries
    // Idle and flooded windows take turns, so a change in the machine's other load falls on both alike.
    const idle = { ms: [] as number[], serverErrors: 0 };
    const flooded = { ms: [] as number[], serverErrors: 0 };
    const statuses: Record<string, number> = {};
    for (let round = 0; round < ROUNDS; round++) {
      const quiet = await memberReads(server.url, electionId, SAMPLES / ROUNDS);
      idle.ms.push(...quiet.ms);
      idle.serverErrors += quiet.serverErrors;

      const flooder = new Worker(FLOODER, { eval: true, workerData: { base: server.url, connections: FLOOD_CONNECTIONS } });
      const counts = new Promise<Record<string, number>>((resolve, reject) => {
        flooder.once('message', resolve);
        flooder.once('error', reject);
      });
      await new Promise((r) => setTimeout(r, 1_000)); // the flood under way first
      const busy = await memberReads(server.url, electionId, SAMPLES / ROUNDS);
      flooder.postMessage('stop');
      for (const [k, n] of Object.entries(await counts)) statuses[k] = (statuses[k] ?? 0) + n;
      await flooder.terminate();
      flooded.ms.push(...busy.ms);
      flooded.serverErrors += busy.serverErrors;
    }

    const sent = Object.values(statuses).reduce((a, b) => a + b, 0);
    const floodErrors = Object.entries(statuses)
      .filter(([s]) => Number(s) >= 500)
      .reduce((a, [, n]) => a + n, 0);
    const idleP99 = p99(idle.ms);
    const floodedP99 = p99(flooded.ms);
    record(`public-page flood, ${engine}`, {
      requests: sent,
      accepted: statuses['200'] ?? 0,
      rejected: statuses['429'] ?? 0,
      serverErrors: floodErrors + idle.serverErrors + flooded.serverErrors,
      note: `members' p99 ${idleP99.toFixed(1)} ms idle, ${floodedP99.toFixed(1)} ms flooded (${(floodedP99 / idleP99).toFixed(2)}×)`,
    });
    process.stdout.write(
      `flood [${engine}]: ${sent} flood requests ${JSON.stringify(statuses)}; members' p99 idle ${idleP99.toFixed(1)} ms, flooded ${floodedP99.toFixed(1)} ms\n`,
    );
    expect(statuses.failed ?? 0).toBe(0);
    expect(floodErrors + idle.serverErrors + flooded.serverErrors).toBe(0);
    // The flood was a flood: most of its new settings were refused, not worked out.
    expect(statuses['429'] ?? 0).toBeGreaterThan(0);
    expect(floodedP99).toBeLessThanOrEqual(2 * idleP99);
  });
});
