import type { Db } from '../db/knex.ts';
import { toBuffer } from '../db/knex.ts';
import { publicKeyFromSeed, signingKeyId } from '../custody/index.ts';

/**
 * Public halves of every signing key this instance has used, by key id. The active seed lives
 * in the instance secrets; its public key is registered here the first time it is seen, and
 * kept for ever, so statements signed before a key change keep verifying.
 */
export interface SigningKey {
  keyId: string;
  publicKey: Buffer;
  addedAt: Date;
}

export async function registerSigningKey(db: Db, seed: Uint8Array, at: Date): Promise<SigningKey> {
  const publicKey = publicKeyFromSeed(seed);
  const keyId = signingKeyId(publicKey);
  await db('signing_keys').insert({ key_id: keyId, public_key: publicKey, added_at: at }).onConflict('key_id').ignore();
  return (await findSigningKey(db, keyId))!;
}

export async function findSigningKey(db: Db, keyId: string): Promise<SigningKey | null> {
  if (!/^[0-9a-f]{16}$/.test(keyId)) return null;
  const r = await db('signing_keys').where({ key_id: keyId }).first();
  return r ? { keyId: r.key_id, publicKey: toBuffer(r.public_key), addedAt: new Date(r.added_at) } : null;
}

export async function listSigningKeys(db: Db): Promise<SigningKey[]> {
  const rows = await db('signing_keys').orderBy([{ column: 'added_at' }, { column: 'key_id' }]);
  return rows.map((r) => ({ keyId: r.key_id, publicKey: toBuffer(r.public_key), addedAt: new Date(r.added_at) }));
}
