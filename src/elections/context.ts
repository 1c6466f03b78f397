import type { Knex } from 'knex';
import type { Engine } from '../db/knex.ts';

import type { KdfParams } from '../custody/kdf.ts';
import type { RandomSource } from '../mechanism/random.ts';
import { pooledRandomBytes } from '../osRandom.ts';
import type { ElectionKeyFiles } from './keyFilePort.ts';
import type { Mailer } from './mailPort.ts';
import type { TallyProcess } from './tallyClaim.ts';

/** n random bytes. Production passes node:crypto; tests pass a seeded source. The type lives in the core. */
export type RandomBytes = RandomSource;
export type { KdfParams };

export interface InstanceSecrets {
  /** HMAC-SHA-256 key for ballot codes and receipts. */
  readonly codePepper: Buffer;
  /** 32-byte Ed25519 seed for signing published statements. */
  readonly signingSeed: Buffer;
}

/**
 * Everything a use-case needs from outside, passed in rather than imported,
 * so tests choose the database, the clock and the randomness.
 */
export interface UseCaseContext {
  readonly knex: Knex;
  readonly engine: Engine;
  readonly now: () => Date;
  readonly random: RandomBytes;
  readonly secrets: InstanceSecrets;
  readonly kdf: KdfParams;
  /** The per-election shred keys, outside the database (keyFilePort.ts; src/keyfiles over VEILTALLY_KEY_DIR). */
  readonly keyFiles: ElectionKeyFiles;
  /**
   * Argon2id cost for organiser passwords. Optional so existing callers keep working:
   * absent means the OWASP Password Storage Cheat Sheet minimum (src/accounts/passwords.ts).
   * Tests pass cheap parameters here.
   */
  readonly passwordKdf?: KdfParams;
  /** The annual ε budget per member group (config); absent means DEFAULT_LEDGER_POLICY. */
  readonly ledgerPolicy?: LedgerPolicy;
  /**
   * Mail to roster members: the adapter (src/mail, chosen by main.ts from the configuration) and
   * the public address the ballot links in the mail point at. Absent: nothing is sent (the CLI).
   */
  readonly mail?: { readonly mailer: Mailer; readonly publicUrl: string };
  /** The process tallies are claimed for (tallyClaim.ts); absent means this one, THIS_PROCESS. */
  readonly tallyProcess?: TallyProcess;
}

export interface LedgerPolicy {
  /** Exact decimal: the most ε for how members voted a group may spend in 12 months. */
  readonly annualBudget: string;
  /** When true, an election that would pass the budget may still be opened (with a warning). */
  readonly allowOverBudget: boolean;
}

export const DEFAULT_LEDGER_POLICY: LedgerPolicy = Object.freeze({ annualBudget: '10', allowOverBudget: false });

export const DEFAULT_KDF: KdfParams = Object.freeze({ memoryKiB: 64 * 1024, iterations: 3, parallelism: 4 });

/**
 * The context the running product uses (server, CLI, demo): the system clock, node:crypto's
 * randomness, RFC 9106 Argon2id defaults and the configured ledger policy. Tests build their own.
 */
export function liveContext(
  db: { knex: Knex; engine: Engine },
  secrets: InstanceSecrets,
  keyFiles: ElectionKeyFiles,
  ledgerPolicy?: LedgerPolicy,
): UseCaseContext {
  return {
    knex: db.knex,
    keyFiles,
    engine: db.engine,
    now: () => new Date(),
    random: pooledRandomBytes(),
    secrets,
    kdf: DEFAULT_KDF,
    ...(ledgerPolicy ? { ledgerPolicy } : {}),
  };
}

/** The live source of randomness, kept here under its old name for callers of the context. */
export { pooledRandomBytes };
