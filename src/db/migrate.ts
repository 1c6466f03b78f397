import type { Knex } from 'knex';
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

const MIGRATIONS_DIR = fileURLToPath(new URL('../../migrations/', import.meta.url));
// Sources load migrations/*.ts; the compiled build (dist/) loads its own migrations/*.js.
const EXT = path.extname(fileURLToPath(import.meta.url));
const NAME = new RegExp(`^\\d{14}-[a-z0-9]+(-[a-z0-9]+)*\\${EXT}$`);

interface MigrationModule {
  up(knex: Knex): Promise<void>;
  down(knex: Knex): Promise<void>;
}

/** Reads migrations/ ourselves so the same files load under tsx, vitest and any engine. */
class DirectorySource implements Knex.MigrationSource<string> {
  async getMigrations(): Promise<string[]> {
    const files = fs.readdirSync(MIGRATIONS_DIR).filter((f) => f.endsWith(EXT));
    const bad = files.find((f) => !NAME.test(f));
    if (bad) throw new MigrationFailed(`"${bad}" is not named YYYYMMDDHHMMSS-kebab-name${EXT}`);
    return files.sort();
  }
  /** Recorded under the source's name, so a database migrated from the sources and from dist/ agrees. */
  getMigrationName(file: string): string {
    return file.slice(0, -EXT.length) + '.ts';
  }
  async getMigration(file: string): Promise<MigrationModule> {
    const mod = (await import(pathToFileURL(path.join(MIGRATIONS_DIR, file)).href)) as MigrationModule;
    if (typeof mod.up !== 'function' || typeof mod.down !== 'function') {
      throw new MigrationFailed(`${file} must export both up and down`);
    }
    return mod;
  }
}

export class MigrationFailed extends Error {
  constructor(message: string, options?: { cause?: unknown }) {
    super(message, options);
    this.name = 'MigrationFailed';
  }
}

const settings = (): Knex.MigratorConfig => ({
  migrationSource: new DirectorySource(),
  tableName: 'schema_migrations',
});

/** Applies every pending migration; a failure throws (and stops start-up), never logs and carries on. */
export async function migrateLatest(knex: Knex): Promise<string[]> {
  try {
    const [, applied] = (await knex.migrate.latest(settings())) as [number, string[]];
    return applied;
  } catch (e) {
    if (e instanceof MigrationFailed) throw e;
    throw new MigrationFailed(`a migration failed: ${e instanceof Error ? e.message : String(e)}`, {
      cause: e,
    });
  }
}

export async function rollbackAll(knex: Knex): Promise<void> {
  await knex.migrate.rollback(settings(), true);
}
