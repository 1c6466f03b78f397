import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openDatabase } from '../../../src/db/knex.ts';
import { migrateLatest } from '../../../src/db/migrate.ts';
import { makeTemplate } from '../../../src/db/makeTemplate.ts';

/**
 * A new embedded data directory starts from the build's template (src/db/template.ts) instead of
 * initdb and the migrations; the result must be the same migrated, empty database, and an existing
 * directory must never be touched by it.
 */
describe('the embedded database template', () => {
  let tmp: string;
  let template: string;
  const migrations = fs.readdirSync(path.resolve(import.meta.dirname, '../../../migrations')).filter((f) => f.endsWith('.ts'));

  beforeAll(async () => {
    tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'vt-template-'));
    template = path.join(tmp, 'template');
    await makeTemplate(template);
  });
  afterAll(() => fs.rmSync(tmp, { recursive: true, force: true }));

  it('gives a new directory the migrated, empty schema, and leaves an existing one as it is', async () => {
    const dir = path.join(tmp, 'fresh');
    const db = openDatabase({ engine: 'pglite', dataDir: dir, template });
    try {
      expect(await migrateLatest(db.knex)).toEqual([]); // every migration already recorded
      const done = await db.knex('schema_migrations').pluck('name');
      expect([...done].sort()).toEqual([...migrations].sort());
      expect(await db.knex('elections').count({ n: '*' }).first()).toMatchObject({ n: 0 });
      await db.knex('signing_keys').insert({ key_id: 'tenants', public_key: Buffer.alloc(32, 7), added_at: new Date() });
    } finally {
      await db.close();
    }
    const again = openDatabase({ engine: 'pglite', dataDir: dir, template });
    try {
      expect(await again.knex('signing_keys').pluck('key_id')).toEqual(['tenants']);
    } finally {
      await again.close();
    }
  });

  it('is not used when another PGlite version made it: initdb and the migrations run', async () => {
    fs.writeFileSync(`${template}.json`, JSON.stringify({ pglite: '0.0.0-other' }));
    const db = openDatabase({ engine: 'pglite', dataDir: path.join(tmp, 'other'), template });
    try {
      expect((await migrateLatest(db.knex)).length).toBe(migrations.length);
    } finally {
      await db.close();
    }
  });
});
