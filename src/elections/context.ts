import crypto from 'node:crypto';
import type { Knex } from 'knex';
import type { Engine } from '../db/knex.ts';

import type { KdfParams } from '../custody/kdf.ts';
import type { RandomSource } from '../mechanism/random.ts';
import type { Mailer } from './mailPort.ts';

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
export function liveContext(db: { knex: Knex; engine: Engine }, secrets: InstanceSecrets, ledgerPolicy?: LedgerPolicy): UseCaseContext {
  return {
    knex: db.knex,
    engine: db.engine,
    now: () => new Date(),
    random: pooledRandomBytes(),
    secrets,
    kdf: DEFAULT_KDF,
    ...(ledgerPolicy ? { ledgerPolicy } : {}),
  };
}

/**
 * node:crypto's CSPRNG, drawn 4 KiB at a time: each randomBytes call costs a trip into OpenSSL, and a
 * cast asks for small amounts several times (receipt, ballot id, nonces), which showed in its profile.
 * Node's own crypto.randomUUID batches the same way. Every byte is handed out once, as a copy (callers
 * may wipe it), and the handed-out part of the pool is zeroed; requests larger than the pool go straight through.
 */
export function pooledRandomBytes(poolSize = 4096): RandomBytes {
  const pool = Buffer.alloc(poolSize);
  let at = poolSize;
  return (n) => {
    if (n > poolSize) return crypto.randomBytes(n);
    if (at + n > poolSize) {
      crypto.randomFillSync(pool);
      at = 0;
    }
    const out = Buffer.from(pool.subarray(at, at + n));
    pool.fill(0, at, at + n);
    at += n;
    return out;
  };
}
