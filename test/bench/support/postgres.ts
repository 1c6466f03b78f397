import crypto from 'node:crypto';
import pg from 'pg';

/**
 * Where the benchmarks find PostgreSQL: BENCH_DATABASE_URL, else TEST_DATABASE_URL, else the
 * local server CI starts. The URL needs the right to CREATE DATABASE: each run makes its own
 * scratch database and drops it afterwards.
 */
export const PG_URL = process.env.BENCH_DATABASE_URL ?? process.env.TEST_DATABASE_URL ?? 'postgres://postgres@127.0.0.1:5432/postgres';

export interface ScratchDatabase {
  url: string;
  drop(): Promise<void>;
}

export async function scratchDatabase(): Promise<ScratchDatabase> {
  const name = `vt_bench_${crypto.randomBytes(5).toString('hex')}`;
  const admin = new pg.Client({ connectionString: PG_URL });
  await admin.connect();
  await admin.query(`CREATE DATABASE ${name}`);
  await admin.end();
  const url = new URL(PG_URL);
  url.pathname = `/${name}`;
  return {
    url: url.href,
    drop: async () => {
      const c = new pg.Client({ connectionString: PG_URL });
      await c.connect();
      await c.query(`DROP DATABASE IF EXISTS ${name} WITH (FORCE)`);
      await c.end();
    },
  };
}

export async function postgresAnswers(): Promise<boolean> {
  const c = new pg.Client({ connectionString: PG_URL, connectionTimeoutMillis: 2000 });
  try {
    await c.connect();
    await c.end();
    return true;
  } catch {
    return false;
  }
}
