import crypto from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import request from 'supertest';
import { verifyStatementText } from '../../../src/cli/commands/verify.ts';
import { main } from '../../../src/cli/main.ts';
import { publicKeyFromSeed, signingKeyId } from '../../../src/custody/index.ts';
import { testApp } from '../../helpers/app.ts';
import { openDatabase } from '../../../src/db/knex.ts';
import { checkSecretsAgree, SecretsDisagree } from '../../../src/instanceCheck.ts';
import { engines } from '../../helpers/databases.ts';
import { castAll, openElectionFixture, tallyFixture } from '../../helpers/fixtures.ts';
import { DAY, useMemberSuite } from '../../helpers/memberSuite.ts';

describe.each(engines)('signing key rotation [%s]', (engine) => {
  const s = useMemberSuite(engine);

  it('a statement signed before a key change still verifies with the key it names, and not with the new one', async () => {
    const before = await s.decided([[0], [1]]);
    const oldId = signingKeyId(publicKeyFromSeed(s.ctx.secrets.signingSeed));
    // The operator replaces the seed (as `veiltally key add` does) and restarts: a new context and app.
    const rotated = { ...s.ctx, secrets: { ...s.ctx.secrets, signingSeed: crypto.randomBytes(32) } };
    const app = testApp(rotated);
    const newId = signingKeyId(publicKeyFromSeed(rotated.secrets.signingSeed));
    const f = await openElectionFixture(rotated, s.organiserId, { codes: 2 });
    await castAll(rotated, f, [[2], [3]]);
    s.clock.advance(8 * DAY);
    await tallyFixture(rotated, f, true);

    const oldText = (await request(app).get(`/results/${before.f.id}/statement.json`).expect(200)).text;
    const newText = (await request(app).get(`/results/${f.id}/statement.json`).expect(200)).text;
    expect(JSON.parse(oldText).statement.keyId).toBe(oldId);
    expect(JSON.parse(newText).statement.keyId).toBe(newId);
    const oldKey = (await request(app).get(`/keys/${oldId}.json`).expect(200)).text;
    const newKey = (await request(app).get(`/keys/${newId}.json`).expect(200)).text;
    expect(verifyStatementText(oldText, oldKey, before.f.id).passed).toBe(true);
    expect(verifyStatementText(newText, newKey, f.id).passed).toBe(true);
    expect(verifyStatementText(oldText, newKey, before.f.id).passed).toBe(false);
    const keysPage = (await request(app).get('/keys').expect(200)).text;
    expect(keysPage).toContain(`${newId}</code> (signs new statements)`);
    expect(keysPage).toContain(`${oldId}</code></th>`);
  });
});

describe('veiltally key add', () => {
  it('writes a new seed to the data directory, registers its public key, and lists both keys', async () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'vt-key-'));
    const saved = { ...process.env };
    const out: string[] = [];
    const io = { stdout: (t: string) => void out.push(t), stderr: (t: string) => void out.push(t) };
    try {
      delete process.env.DATABASE_URL;
      process.env.VEILTALLY_DATA_DIR = dir;
      expect(await main(['key', 'add'], io)).toBe(0);
      const seedFile = path.join(dir, 'secrets', 'signing-seed');
      const first = fs.readFileSync(seedFile, 'utf8').trim();
      expect(first).toMatch(/^[0-9a-f]{64}$/);
      expect((fs.statSync(seedFile).mode & 0o777).toString(8)).toBe('600');
      // An instance starts with the first seed and stores its fingerprint.
      const secretsWith = (seedHex: string) => ({
        sessionSecret: 's'.repeat(40),
        codePepper: Buffer.alloc(32, 1),
        signingSeed: Buffer.from(seedHex, 'hex'),
      });
      let db = openDatabase({ engine: 'pglite', dataDir: dir });
      await checkSecretsAgree(db.knex, secretsWith(first));
      await db.close();
      expect(await main(['key', 'add'], io)).toBe(0);
      const second = fs.readFileSync(seedFile, 'utf8').trim();
      expect(second).not.toBe(first);
      // The stored fingerprint moved with the seed: the new seed starts, an instance left on the old one does not.
      db = openDatabase({ engine: 'pglite', dataDir: dir });
      try {
        await checkSecretsAgree(db.knex, secretsWith(second));
        await expect(checkSecretsAgree(db.knex, secretsWith(first))).rejects.toBeInstanceOf(SecretsDisagree);
      } finally {
        await db.close();
      }
      out.length = 0;
      expect(await main(['key', 'list'], io)).toBe(0);
      const listed = out.join('');
      for (const seed of [first, second]) expect(listed).toContain(signingKeyId(publicKeyFromSeed(Buffer.from(seed, 'hex'))));
      expect(await main(['key', 'remove'], io)).toBe(2);
      process.env.VEILTALLY_SIGNING_SEED = 'ab'.repeat(32);
      out.length = 0;
      expect(await main(['key', 'add'], io)).toBe(2);
      expect(out.join('')).toContain('key add --print');
    } finally {
      process.env = saved;
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });
});
