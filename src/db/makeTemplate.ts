import { openDatabase } from './knex.ts';
import { migrateLatest } from './migrate.ts';
import { TEMPLATE_DIR, writeTemplate } from './template.ts';

/** The build's step (src/build/build.mjs): the migrated empty database new data directories start from. */
export async function makeTemplate(dir: string = TEMPLATE_DIR): Promise<void> {
  await writeTemplate(async (pglite) => {
    // Not closed here: closing knex would close the PGlite that writeTemplate still dumps and closes.
    const db = openDatabase({ engine: 'pglite', dataDir: null, pglite });
    await migrateLatest(db.knex);
  }, dir);
}
