/**
 * Intake: real casts over HTTP against the compiled server, with fresh pre-issued codes, on
 * PostgreSQL at 50 and 200 concurrent members, and on the embedded database. Ceiling for
 * PostgreSQL, measured in this run right after the HTTP casts: the app's own cast statement run by
 * pgbench with as many clients as members (support/pgbench.ts), no HTTP, no crypto, no pool. A second
 * reference, reported without a target: the cast sent step by step (BEGIN, spend, receipt, ballot,
 * COMMIT) through pg at the same concurrency and the app's pool size.
 * Invented data: a rowing club choosing among 20 names for its new boat.
 */
import crypto from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import pg from 'pg';
import { encodeAndSeal } from '../../src/custody/index.ts';
import { DEFAULT_POOL_MAX, openDatabase, type Database } from '../../src/db/knex.ts';
import { migrateLatest } from '../../src/db/migrate.ts';
import { insertCodeHashes } from '../../src/elections/codeRepo.ts';
import type { UseCaseContext } from '../../src/elections/context.ts';
import { findElection } from '../../src/elections/electionRepo.ts';
import { TEST_KDF, testKeyDirectory } from '../helpers/context.ts';
import { createOrganiser, openElectionFixture } from '../helpers/fixtures.ts';
import { figure, percentile, type BenchOptions, type Figure } from './support/figures.ts';
import { pgbenchCasts, pgbenchVersion, spareConnections, storedLengths, type PgbenchCasts } from './support/pgbench.ts';
import { postgresAnswers, scratchDatabase } from './support/postgres.ts';
import { startCompiledServer } from './support/server.ts';
import { castStatements } from './support/castQueries.ts';
import { castAll, prepareCasts, type IntakeResult } from './support/voters.ts';

const OPTIONS = Array.from({ length: 20 }, (_, i) => ({ label: `Boat name ${i + 1}`, description: '' }));
const approvalsFor = (i: number) => [i % 20, (i * 7 + 3) % 20].filter((p, j, a) => a.indexOf(p) === j);

function benchContext(db: Database, pepper: Buffer): UseCaseContext {
  return {
    knex: db.knex,
    engine: db.engine,
    now: () => new Date(),
    random: (n) => crypto.randomBytes(n),
    secrets: { codePepper: pepper, signingSeed: crypto.randomBytes(32) },
    kdf: TEST_KDF, // key wrapping is not on the cast path
    keyFiles: testKeyDirectory(db).files,
  };
}

async function openBoatElection(ctx: UseCaseContext, organiserId: string, codes: number) {
  return openElectionFixture(ctx, organiserId, {
    title: 'Name the new eight',
    options: OPTIONS,
    codes,
    closesAt: new Date(Date.now() + 24 * 3600_000),
  });
}

/** The second reference: spend a code, store a receipt and a ballot in one transaction, step by step through pg alone. */
async function ceiling(db: Database, url: string, electionId: string, casts: number, concurrency: number): Promise<IntakeResult> {
  const hashes = Array.from({ length: casts }, () => crypto.randomBytes(32));
  await insertCodeHashes(db.knex, electionId, hashes);
  const e = await findElection(db.knex, electionId);
  const sealedLength = encodeAndSeal(e!.publicKey!, electionId, OPTIONS.length, [1]).length;
  const client = new pg.Pool({ connectionString: url, max: DEFAULT_POOL_MAX });
  const latencies: number[] = [];
  let errors = 0;
  let next = 0;
  const t0 = performance.now();
  await Promise.all(
    Array.from({ length: concurrency }, async () => {
      while (next < casts) {
        const hash = hashes[next++]!;
        const t = performance.now();
        const c = await client.connect();
        try {
          await c.query('BEGIN');
          const spent = await c.query(
            'UPDATE ballot_codes SET spent = true WHERE election_id = $1 AND code_hash = $2 AND spent = false AND revoked = false RETURNING election_id',
            [electionId, hash],
          );
          if (spent.rowCount !== 1) throw new Error('code not spent');
          await c.query('INSERT INTO receipts (election_id, receipt_hash) VALUES ($1, $2) ON CONFLICT DO NOTHING RETURNING election_id', [
            electionId,
            crypto.randomBytes(32),
          ]);
          await c.query('INSERT INTO ballots (id, election_id, sealed) VALUES ($1, $2, $3)', [
            crypto.randomUUID(),
            electionId,
            crypto.randomBytes(sealedLength),
          ]);
          await c.query('COMMIT');
        } catch {
          errors++;
          await c.query('ROLLBACK');
        } finally {
          c.release();
        }
        latencies.push(performance.now() - t);
      }
    }),
  );
  const seconds = (performance.now() - t0) / 1000;
  await client.end();
  latencies.sort((a, b) => a - b);
  return { ballotsPerSecond: (casts - errors) / seconds, p50Ms: percentile(latencies, 50), p99Ms: percentile(latencies, 99), errors, casts };
}

async function postgresIntake(opts: BenchOptions): Promise<Figure[]> {
  const levels = opts.quick
    ? [{ concurrency: 50, casts: 150, pgbenchCasts: 1000 }]
    : [
        { concurrency: 50, casts: 1500, pgbenchCasts: 5000 },
        { concurrency: 200, casts: 2000, pgbenchCasts: 5000 },
      ];
  const pgbench = pgbenchVersion();
  if (pgbench) console.log(`  ceiling: ${pgbench}`);
  else console.log('  pgbench not found (Debian: apt-get install postgresql-client): intake on PostgreSQL is reported without its ceiling');
  const scratch = await scratchDatabase();
  const pepper = crypto.randomBytes(32);
  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'vt-bench-'));
  const db = openDatabase({ engine: 'postgres', url: scratch.url, poolMax: 4 });
  const figures: Figure[] = [];
  try {
    await migrateLatest(db.knex);
    const ctx = benchContext(db, pepper);
    const organiserId = await createOrganiser(ctx);
    const server = await startCompiledServer({
      DATABASE_URL: scratch.url,
      VEILTALLY_DATA_DIR: dataDir,
      VEILTALLY_CODE_PEPPER: pepper.toString('hex'),
      VEILTALLY_KEY_DIR: testKeyDirectory(db).dir,
      TRUST_PROXY: 'loopback', // each member sends its own address (support/voters.ts)
    });
    try {
      for (const { concurrency, casts, pgbenchCasts: pgbenchTransactions } of levels) {
        const f = await openBoatElection(ctx, organiserId, casts);
        const prepared = await prepareCasts(server.url, f.id, f.codes, approvalsFor);
        const http = await castAll(server.url, prepared, concurrency);
        let bench: PgbenchCasts | null = null;
        if (pgbench) {
          const clients = Math.min(concurrency, await spareConnections(db));
          if (clients < concurrency)
            console.log(`  pgbench: the server has room for ${clients} more connections, not ${concurrency}: ${clients} clients`);
          const target = await openBoatElection(ctx, organiserId, 1);
          const e = await findElection(db.knex, target.id);
          bench = await pgbenchCasts(
            db,
            scratch.url,
            { id: target.id, publicKey: e!.publicKey!, optionCount: OPTIONS.length },
            await storedLengths(db, f.id),
            clients,
            pgbenchTransactions,
          );
        }
        const base = await openBoatElection(ctx, organiserId, 1);
        const raw = await ceiling(db, scratch.url, base.id, casts, concurrency);
        const label = `intake, PostgreSQL, ${concurrency} members`;
        figures.push(
          figure(
            `${label}: ballots/s`,
            http.ballotsPerSecond,
            'ballots/s',
            bench?.castsPerSecond ?? null,
            bench ? { atLeastRatio: concurrency >= 200 ? 0.45 : 0.5 } : null,
          ),
          figure(`${label}: p50`, http.p50Ms, 'ms', bench?.p50Ms ?? null),
          figure(`${label}: p99`, http.p99Ms, 'ms', bench?.p99Ms ?? null, bench && concurrency === 200 ? { atMostRatio: 3 } : null),
          figure(`${label}: errors`, http.errors, 'casts', null, { below: 1 }),
          figure(`${label}: ballots/s against the step-by-step cast through pg`, http.ballotsPerSecond, 'ballots/s', raw.ballotsPerSecond),
        );
        if (bench) {
          const pl = `pgbench, the cast statement, ${bench.clients} clients`;
          figures.push(
            figure(`${pl}: casts/s`, bench.castsPerSecond, 'casts/s', null),
            figure(`${pl}: p99`, bench.p99Ms, 'ms', null),
            figure(`${pl}: casts not stored`, bench.transactions - bench.stored, 'casts', null, { below: 1 }),
          );
        }
      }
    } finally {
      await server.stop();
    }
  } finally {
    await db.close();
    await scratch.drop();
    fs.rmSync(dataDir, { recursive: true, force: true });
  }
  return figures;
}

async function embeddedIntake(opts: BenchOptions): Promise<Figure[]> {
  const concurrency = 50;
  const casts = opts.quick ? 150 : 1500;
  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'vt-bench-'));
  const pepper = crypto.randomBytes(32);
  try {
    // PGlite is one process per directory: seed first, then hand the directory to the server.
    const db = openDatabase({ engine: 'pglite', dataDir });
    let electionId: string;
    let codes: string[];
    try {
      await migrateLatest(db.knex);
      const ctx = benchContext(db, pepper);
      const f = await openBoatElection(ctx, await createOrganiser(ctx), casts);
      [electionId, codes] = [f.id, f.codes];
    } finally {
      await db.close();
    }
    const server = await startCompiledServer({
      VEILTALLY_DATA_DIR: dataDir,
      VEILTALLY_CODE_PEPPER: pepper.toString('hex'),
      VEILTALLY_KEY_DIR: testKeyDirectory(db).dir,
      TRUST_PROXY: 'loopback', // each member sends its own address (support/voters.ts)
    });
    try {
      const prepared = await prepareCasts(server.url, electionId, codes, approvalsFor);
      const r = await castAll(server.url, prepared, concurrency);
      const label = `intake, embedded, ${concurrency} members`;
      return [
        figure(`${label}: ballots/s`, r.ballotsPerSecond, 'ballots/s', null, { atLeast: 300 }),
        figure(`${label}: p99`, r.p99Ms, 'ms', null),
        figure(`${label}: errors`, r.errors, 'casts', null, { below: 1 }),
      ];
    } finally {
      await server.stop();
    }
  } finally {
    fs.rmSync(dataDir, { recursive: true, force: true });
  }
}

export async function run(opts: BenchOptions): Promise<Figure[]> {
  const figures: Figure[] = [];
  if (await postgresAnswers()) {
    // Round trips are what a cast waits on. Ceiling: 5, the floor of a cast sent step by step (BEGIN, spend,
    // receipt, ballot, COMMIT); the app's cast is one statement once its election is known.
    figures.push(
      figure(
        'intake: database statements per cast',
        (await castStatements(process.env.TEST_DATABASE_URL ? 'postgres' : 'pglite')).length,
        'statements',
        5,
      ),
    );
    figures.push(...(await postgresIntake(opts)));
  } else console.log('  PostgreSQL does not answer (set BENCH_DATABASE_URL): skipping intake on PostgreSQL');
  figures.push(...(await embeddedIntake(opts)));
  return figures;
}
