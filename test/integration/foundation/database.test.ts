import { afterAll, describe, expect, it } from 'vitest';
import crypto from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { openDatabase, toBuffer, toCount } from '../../../src/db/knex.ts';
import { migrateLatest, rollbackAll } from '../../../src/db/migrate.ts';
import { engines, freshDatabase } from '../../helpers/databases.ts';

const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'vt-db-'));
afterAll(() => fs.rmSync(tmp, { recursive: true, force: true }));

describe('embedded database on disk [pglite]', () => {
  it('keeps a row across a restart', async () => {
    const first = openDatabase({ engine: 'pglite', dataDir: tmp });
    await migrateLatest(first.knex);
    await first.knex('instance_settings').insert({ name: 'restart-check', value: JSON.stringify({ kept: true }) });
    await first.close();

    const second = openDatabase({ engine: 'pglite', dataDir: tmp });
    expect(await migrateLatest(second.knex)).toEqual([]); // nothing pending the second time
    const row = await second.knex('instance_settings').where({ name: 'restart-check' }).first();
    expect(row.value).toEqual({ kept: true });
    await second.close();
  });
});

describe.each(engines)('migrations and engine differences [%s]', (engine) => {
  it('migrates up, down and up again', async () => {
    const db = await freshDatabase(engine);
    try {
      expect(await db.knex.schema.hasTable('ballots')).toBe(true);
      await rollbackAll(db.knex);
      expect(await db.knex.schema.hasTable('ballots')).toBe(false);
      expect((await migrateLatest(db.knex)).length).toBeGreaterThan(0);
      expect(await db.knex.schema.hasTable('ballots')).toBe(true);
    } finally {
      await db.dispose();
    }
  });

  it('normalises counts and bytea', async () => {
    const db = await freshDatabase(engine);
    try {
      const counted = await db.knex('organisers').count({ n: '*' });
      expect(toCount(counted[0]?.n)).toBe(0);
      const bytes = crypto.randomBytes(40);
      const id = crypto.randomUUID();
      await db.knex('organisers').insert({ id, email: 'a@example.org', password_hash: 'x' });
      const eid = crypto.randomUUID();
      await db
        .knex('elections')
        .insert({ id: eid, owner_id: id, title: 't', epsilon: '1', opens_at: new Date(), closes_at: new Date(), public_key: bytes });
      const row = await db.knex('elections').where({ id: eid }).first();
      expect(toBuffer(row.public_key).equals(bytes)).toBe(true);
    } finally {
      await db.dispose();
    }
  });
});
