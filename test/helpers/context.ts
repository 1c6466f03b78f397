import crypto from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { Knex } from 'knex';
import type { UseCaseContext, KdfParams } from '../../src/elections/context.ts';
import type { ElectionKeyFiles } from '../../src/elections/keyFilePort.ts';
import { keyDirectory } from '../../src/keyfiles/keyDirectory.ts';
import type { TestDatabase } from './databases.ts';

/**
 * Cheap Argon2id for tests only, for election passphrases (`kdf`) and organiser passwords
 * (`passwordKdf`) alike. Production keeps RFC 9106 §4's second option for passphrases and the OWASP
 * minimum for passwords; tests of those real parameters import DEFAULT_KDF or OWASP_PASSWORD_KDF.
 */
export const TEST_KDF: KdfParams = Object.freeze({ memoryKiB: 1024, iterations: 1, parallelism: 1 });

export interface TestClock {
  now: () => Date;
  set(d: Date | string): void;
  advance(ms: number): void;
}

export function testClock(start: Date | string = '2026-06-01T09:00:00Z'): TestClock {
  let t = new Date(start).getTime();
  return {
    now: () => new Date(t),
    set: (d) => {
      t = new Date(d).getTime();
    },
    advance: (ms) => {
      t += ms;
    },
  };
}

const keyDirs = new WeakMap<Knex, { dir: string; files: ElectionKeyFiles }>();
const made: string[] = [];
process.once('exit', () => {
  for (const dir of made) fs.rmSync(dir, { recursive: true, force: true });
});

/** One key directory per test database (every context on one database shares it, as instances must). */
export function testKeyDirectory(db: { knex: Knex }): { dir: string; files: ElectionKeyFiles } {
  let k = keyDirs.get(db.knex);
  if (!k) {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'vt-keys-'));
    made.push(dir);
    k = { dir, files: keyDirectory(dir) };
    keyDirs.set(db.knex, k);
  }
  return k;
}

export function testContext(db: TestDatabase, overrides: Partial<UseCaseContext> = {}): UseCaseContext {
  return {
    knex: db.knex,
    keyFiles: testKeyDirectory(db).files,
    engine: db.engine,
    now: () => new Date(),
    random: (n) => crypto.randomBytes(n),
    secrets: { codePepper: crypto.randomBytes(32), signingSeed: crypto.randomBytes(32) },
    kdf: TEST_KDF,
    passwordKdf: TEST_KDF,
    ...overrides,
  };
}
