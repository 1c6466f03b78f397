import crypto from 'node:crypto';
import type { UseCaseContext, KdfParams } from '../../src/elections/context.ts';
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

export function testContext(db: TestDatabase, overrides: Partial<UseCaseContext> = {}): UseCaseContext {
  return {
    knex: db.knex,
    engine: db.engine,
    now: () => new Date(),
    random: (n) => crypto.randomBytes(n),
    secrets: { codePepper: crypto.randomBytes(32), signingSeed: crypto.randomBytes(32) },
    kdf: TEST_KDF,
    passwordKdf: TEST_KDF,
    ...overrides,
  };
}
