import knexFactory, { type Knex } from 'knex';
import ClientPgLite from 'knex-pglite';
import { createRequire } from 'node:module';
import type pg from 'pg';
import fs from 'node:fs';
import path from 'node:path';
import { PGlite } from '@electric-sql/pglite';
import { lockDataDirectory, type DirectoryLock } from './dirLock.ts';
import { copyTemplate, isInitialised, usableTemplate } from './template.ts';

export type Engine = 'pglite' | 'postgres';

export type Db = Knex | Knex.Transaction;

export interface Database {
  readonly knex: Knex;
  readonly engine: Engine;
  close(): Promise<void>;
}

/**
 * pg, loaded only for PostgreSQL: the embedded database never needs it, and loading it was part of
 * `npm start`'s time. bigint / numeric come back from pg as strings; counts and ids we use fit in a double.
 */
let pgLoaded = false;
function loadPg(): void {
  if (pgLoaded) return;
  const driver = createRequire(import.meta.url)('pg') as typeof pg;
  driver.types.setTypeParser(driver.types.builtins.INT8, (v) => Number(v));
  pgLoaded = true;
}

/** Connections per app server to PostgreSQL (the benchmarks' ceiling uses the same). */
export const DEFAULT_POOL_MAX = 10;

export type DatabaseOptions =
  | { engine: 'postgres'; url: string; searchPath?: string; poolMax?: number }
  | {
      engine: 'pglite';
      dataDir: string | null;
      /** The template a new data directory starts from (template.ts); null: none, initdb runs. Default: the build's. */
      template?: string | null;
      /** An existing PGlite to use (the build's template maker); dataDir must then be null. */
      pglite?: PGlite;
    };

/**
 * Builds knex for the embedded PGlite (a directory, or memory when dataDir is null)
 * or for PostgreSQL. Everything that differs between the two stays in src/db.
 */
export function openDatabase(options: DatabaseOptions): Database {
  if (options.engine === 'postgres') {
    loadPg();
    const knex = knexFactory({
      client: 'pg',
      connection: { connectionString: options.url },
      searchPath: options.searchPath ? [options.searchPath] : undefined,
      pool: { min: 0, max: options.poolMax ?? DEFAULT_POOL_MAX },
    });
    return { knex, engine: 'postgres', close: () => knex.destroy() };
  }
  let pglite: PGlite;
  let lock: DirectoryLock | null = null;
  if (options.pglite) pglite = options.pglite;
  else if (options.dataDir !== null) {
    // Before any file is opened: a second process on this directory stops here (dirLock.ts).
    lock = lockDataDirectory(path.resolve(options.dataDir));
    const dir = path.join(options.dataDir, 'pglite');
    fs.mkdirSync(dir, { recursive: true, mode: 0o700 });
    // A new directory starts from the build's template when there is one (template.ts), not from initdb.
    const template = isInitialised(dir) ? null : usableTemplate(options.template);
    if (template) copyTemplate(template, dir);
    pglite = new PGlite({ dataDir: dir });
  } else pglite = new PGlite();
  const connection = { pglite } as unknown as Knex.StaticConnectionConfig;
  const knex = knexFactory({
    client: ClientPgLite as unknown as typeof Knex.Client,
    dialect: 'postgres',
    connection,
  });
  return {
    knex,
    engine: 'pglite',
    close: async () => {
      try {
        await knex.destroy();
      } finally {
        lock?.release();
      }
    },
  };
}

/** count(*) is a string in pg (bigint) and a number in PGlite: normalise here. */
export function toCount(value: unknown): number {
  const n = typeof value === 'number' ? value : Number(value);
  if (!Number.isSafeInteger(n)) throw new Error('count was not an integer');
  return n;
}

/** bytea arrives as Buffer from pg and as Uint8Array from PGlite. */
export function toBuffer(value: unknown): Buffer {
  if (Buffer.isBuffer(value)) return value;
  if (value instanceof Uint8Array) return Buffer.from(value.buffer, value.byteOffset, value.byteLength);
  throw new Error('expected binary column');
}

/**
 * The constraint a statement broke when it failed on a unique or primary key (SQLSTATE 23505),
 * else null. pg and PGlite both raise the server's error fields (code, constraint) on the error.
 */
export function uniqueViolation(err: unknown): string | null {
  const e = err as { code?: unknown; constraint?: unknown } | null;
  if (!e || typeof e !== 'object' || e.code !== '23505') return null;
  return typeof e.constraint === 'string' ? e.constraint : '';
}

/** Rows of a knex.raw result: pg returns a Result, PGlite through knex-pglite an object with rows. */
export function rawRows(result: unknown): Array<Record<string, unknown>> {
  const rows = (result as { rows?: unknown } | null)?.rows;
  return Array.isArray(rows) ? (rows as Array<Record<string, unknown>>) : [];
}
