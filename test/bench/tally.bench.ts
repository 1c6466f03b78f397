import crypto from 'node:crypto';
import { availableParallelism, loadavg } from 'node:os';
import { performance } from 'node:perf_hooks';
import { pathToFileURL } from 'node:url';
import { createElectionKeys, encodeAndSeal, openAndCount, openingKey, unwrapElectionKey } from '../../src/custody/index.ts';
import type { Engine } from '../../src/db/knex.ts';
import { countApprovals } from '../../src/elections/tallyCounter.ts';
import { freshDatabase, type TestDatabase } from '../helpers/databases.ts';
import type { BenchReport } from './run.ts';

/**
 * Tally throughput: how many sealed ballots per second are opened and counted, in this
 * thread and in worker threads, with the database read included (keyset pages of 1000).
 * Invented data: a tenants' association choosing which of 10 repairs to fund.
 * Sizes: BENCH_BALLOTS (default 50000). PostgreSQL too when TEST_DATABASE_URL is set.
 */
export interface TallyBenchRow {
  engine: Engine | 'memory';
  ballots: number;
  threads: number;
  seconds: number;
  ballotsPerSecond: number;
}

const D = 10;
const PASS = 'boiler, roof, then the lift';
const KDF = { memoryKiB: 1024, iterations: 1, parallelism: 1 }; // key wrapping is not what is measured

async function seed(db: TestDatabase, n: number, publicKey: Buffer, electionId: string): Promise<void> {
  const owner = crypto.randomUUID();
  await db.knex('organisers').insert({ id: owner, email: `${owner}@tenants.example`, password_hash: 'x' });
  await db.knex('elections').insert({
    id: electionId, owner_id: owner, title: 'Repairs to fund this year', state: 'closed', epsilon: '1',
    opens_at: '2026-05-01T00:00:00Z', closes_at: '2026-05-08T00:00:00Z', public_key: publicKey,
  });
  await db.knex('options').insert(Array.from({ length: D }, (_, position) => ({ election_id: electionId, position, label: `Repair ${position + 1}` })));
  for (let i = 0; i < n; i += 1000) {
    const rows = [];
    for (let j = i; j < Math.min(n, i + 1000); j++) {
      const approvals = [...Array(D).keys()].filter(() => crypto.randomInt(3) === 0);
      rows.push({ id: crypto.randomUUID(), election_id: electionId, sealed: encodeAndSeal(publicKey, electionId, D, approvals) });
    }
    await db.knex('ballots').insert(rows);
  }
}

async function time(fn: () => Promise<unknown> | unknown): Promise<number> {
  const t0 = performance.now();
  await fn();
  return (performance.now() - t0) / 1000;
}

export async function run(): Promise<BenchReport> {
  const n = Number(process.env.BENCH_BALLOTS ?? 50_000);
  const engines: Engine[] = process.env.TEST_DATABASE_URL ? ['pglite', 'postgres'] : ['pglite'];
  const electionId = crypto.randomUUID();
  const { publicKey, wrapped } = await createElectionKeys({ passphrase: PASS, electionId, kdf: KDF });
  const secretKey = await unwrapElectionKey(wrapped, PASS, electionId);
  const rows: TallyBenchRow[] = [];
  const add = (engine: TallyBenchRow['engine'], threads: number, seconds: number) =>
    rows.push({ engine, ballots: n, threads, seconds: Number(seconds.toFixed(3)), ballotsPerSecond: Math.round(n / seconds) });

  // Opening alone, no database: the ceiling for one core.
  const sealed = Array.from({ length: Math.min(n, 20_000) }, () => encodeAndSeal(publicKey, electionId, D, [1, 3]));
  const k = openingKey(publicKey, secretKey, electionId, D);
  const counts = new Uint32Array(D);
  const s = await time(() => sealed.forEach((c) => openAndCount(k, c, counts)));
  rows.push({ engine: 'memory', ballots: sealed.length, threads: 0, seconds: Number(s.toFixed(3)), ballotsPerSecond: Math.round(sealed.length / s) });

  for (const engine of engines) {
    const db = await freshDatabase(engine);
    try {
      await seed(db, n, publicKey, electionId);
      for (const threads of [0, 1, 2, Math.min(4, Math.max(2, availableParallelism()))].filter((t, i, a) => a.indexOf(t) === i)) {
        const req = { electionId, publicKey, secretKey, optionCount: D, threads };
        // Best of two: other work on a shared machine only ever slows a run down.
        let best = Infinity;
        for (let rep = 0; rep < 2; rep++) {
          best = Math.min(best, await time(async () => {
            const t = await countApprovals(db.knex, req);
            if (t.ballots !== n || t.unreadable !== 0) throw new Error('benchmark tally miscounted');
          }));
        }
        add(engine, threads, best);
      }
    } finally {
      await db.dispose();
    }
  }
  const load = loadavg().map((x) => x.toFixed(1)).join(' ');
  const columns = ['engine', 'ballots', 'threads', 'seconds', 'ballotsPerSecond'] as const;
  return {
    title: `Tally throughput (d = ${D}, ${availableParallelism()} cores, load average ${load}; threads 0 = main thread only)`,
    columns: [...columns],
    rows: rows.map((r) => columns.map((c) => String(r[c]))),
  };
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) await run();
