import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import crypto from 'node:crypto';
import { checkSecretsAgree, SecretsDisagree } from '../../../src/instanceCheck.ts';
import { withHousekeepingLock } from '../../../src/housekeeping.ts';
import { openDatabase } from '../../../src/db/knex.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testContext } from '../../helpers/context.ts';

const secrets = () => ({
  sessionSecret: crypto.randomBytes(32).toString('hex'),
  codePepper: crypto.randomBytes(32),
  signingSeed: crypto.randomBytes(32),
});

describe.each(engines)('instances sharing a database [%s]', (engine) => {
  let db: TestDatabase;
  beforeAll(async () => {
    db = await freshDatabase(engine);
  });
  afterAll(() => db.dispose());

  it('agree on their secrets: the same set passes, another pepper, seed or session secret stops start-up naming it', async () => {
    const mine = secrets();
    await checkSecretsAgree(db.knex, mine);
    await checkSecretsAgree(db.knex, { ...mine });
    const stored = JSON.stringify(await db.knex('instance_settings').select());
    expect(stored).not.toContain(mine.codePepper.toString('hex'));
    expect(stored).not.toContain(mine.sessionSecret);
    for (const [field, variable] of [
      ['codePepper', 'VEILTALLY_CODE_PEPPER'],
      ['signingSeed', 'VEILTALLY_SIGNING_SEED'],
      ['sessionSecret', 'SESSION_SECRET'],
    ] as const) {
      const other = { ...mine, [field]: secrets()[field] };
      const err = await checkSecretsAgree(db.knex, other).catch((e) => e);
      expect(err).toBeInstanceOf(SecretsDisagree);
      expect(err.message).toContain(`${variable} differs`);
    }
  });
});

describe.runIf(process.env.TEST_DATABASE_URL)('housekeeping on one instance at a time [postgres]', () => {
  it('a second instance skips the round while the first holds the advisory lock', async () => {
    const db = await freshDatabase('postgres');
    const schema = (await db.knex.raw('select current_schema() as s')).rows[0].s as string;
    const second = openDatabase({ engine: 'postgres', url: process.env.TEST_DATABASE_URL!, searchPath: schema });
    try {
      let release!: () => void;
      const held = new Promise<void>((r) => (release = r));
      let entered!: () => void;
      const inside = new Promise<void>((r) => (entered = r));
      const first = withHousekeepingLock(testContext(db), async () => {
        entered();
        await held;
      });
      await inside;
      expect(await withHousekeepingLock(testContext({ ...second, dispose: async () => undefined }), async () => undefined)).toBe(false);
      release();
      expect(await first).toBe(true);
      expect(await withHousekeepingLock(testContext({ ...second, dispose: async () => undefined }), async () => undefined)).toBe(true);
    } finally {
      await second.close();
      await db.dispose();
    }
  });
});
