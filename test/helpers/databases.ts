import crypto from 'node:crypto';
import { openDatabase, type Database, type Engine } from '../../src/db/knex.ts';
import { migrateLatest } from '../../src/db/migrate.ts';

export interface TestDatabase extends Database {
  /** Drops whatever this test file created (the schema on PostgreSQL) and closes. */
  dispose(): Promise<void>;
}

const pgUrl = process.env.TEST_DATABASE_URL;

/**
 * The engines integration suites run on: PGlite always, PostgreSQL when TEST_DATABASE_URL is set.
 * Use with describe.each(engines)('something [%s]', ...) so the runner output names the engine.
 */
export const engines: Engine[] = pgUrl ? ['pglite', 'postgres'] : ['pglite'];

/** A fresh, migrated database: in-memory PGlite, or a new schema on the PostgreSQL server. */
export async function freshDatabase(engine: Engine): Promise<TestDatabase> {
  if (engine === 'pglite') {
    const db = openDatabase({ engine: 'pglite', dataDir: null });
    await migrateLatest(db.knex);
    return { ...db, dispose: () => db.close() };
  }
  if (!pgUrl) throw new Error('TEST_DATABASE_URL is not set');
  const schema = `vt_test_${crypto.randomBytes(6).toString('hex')}`;
  const admin = openDatabase({ engine: 'postgres', url: pgUrl, poolMax: 1 });
  await admin.knex.raw('CREATE SCHEMA ??', [schema]);
  await admin.close();
  const db = openDatabase({ engine: 'postgres', url: pgUrl, searchPath: schema });
  await migrateLatest(db.knex);
  return {
    ...db,
    dispose: async () => {
      await db.knex.raw('DROP SCHEMA ?? CASCADE', [schema]);
      await db.close();
    },
  };
}
