import crypto from 'node:crypto';
import type { Knex } from 'knex';
import type { AllSecrets } from './secrets.ts';

/**
 * App servers sharing one database must share its secrets: with another code pepper they refuse
 * each other's codes, with another session secret each other's sessions, with another signing seed
 * they sign with different keys. Each instance stores a fingerprint of each secret in the database
 * on first start and compares on every start. A fingerprint is HMAC-SHA-256 keyed by the secret over
 * a fixed label (RFC 2104), so it tells nothing about the secret itself.
 */
const SETTING = 'secret-fingerprints';

const SECRETS = [
  { name: 'SESSION_SECRET', of: (s: AllSecrets) => Buffer.from(s.sessionSecret, 'utf8') },
  { name: 'VEILTALLY_CODE_PEPPER', of: (s: AllSecrets) => s.codePepper },
  { name: 'VEILTALLY_SIGNING_SEED', of: (s: AllSecrets) => s.signingSeed },
] as const;

function fingerprintOf(name: string, secret: Buffer): string {
  return crypto.createHmac('sha256', secret).update(`veiltally fingerprint ${name}`).digest('hex').slice(0, 32);
}

export function fingerprints(secrets: AllSecrets): Record<string, string> {
  return Object.fromEntries(SECRETS.map(({ name, of }) => [name, fingerprintOf(name, of(secrets))]));
}

/**
 * `veiltally key add` replaces the signing seed on purpose: the stored fingerprint follows it, so
 * instances restarted with the new seed start, and one left on the old seed is stopped.
 */
export async function replaceSigningSeedFingerprint(knex: Knex, seed: Buffer): Promise<void> {
  const row = await knex('instance_settings').where({ name: SETTING }).first('value');
  if (!row) return; // no instance has started yet: the first start stores the new fingerprint
  const stored = (typeof row.value === 'string' ? JSON.parse(row.value) : row.value) as Record<string, string>;
  const value = { ...stored, VEILTALLY_SIGNING_SEED: fingerprintOf('VEILTALLY_SIGNING_SEED', seed) };
  await knex('instance_settings')
    .where({ name: SETTING })
    .update({ value: JSON.stringify(value) });
}

export class SecretsDisagree extends Error {
  constructor(readonly variable: string) {
    super(
      `${variable} differs from the value the other app servers on this database use; give every instance the same ${variable} (or ${variable}_FILE)`,
    );
    this.name = 'SecretsDisagree';
  }
}

/** Stores this instance's fingerprints when none are stored yet; throws SecretsDisagree on a mismatch. */
export async function checkSecretsAgree(knex: Knex, secrets: AllSecrets): Promise<void> {
  const mine = fingerprints(secrets);
  await knex('instance_settings')
    .insert({ name: SETTING, value: JSON.stringify(mine) })
    .onConflict('name')
    .ignore();
  const row = await knex('instance_settings').where({ name: SETTING }).first('value');
  const stored = (typeof row.value === 'string' ? JSON.parse(row.value) : row.value) as Record<string, string>;
  for (const { name } of SECRETS) {
    if (stored[name] === undefined) continue; // added by a later version: nothing to compare yet
    if (stored[name] !== mine[name]) throw new SecretsDisagree(name);
  }
  const missing = SECRETS.filter(({ name }) => stored[name] === undefined);
  if (missing.length) {
    await knex('instance_settings')
      .where({ name: SETTING })
      .update({ value: JSON.stringify({ ...mine, ...stored }) });
  }
}
