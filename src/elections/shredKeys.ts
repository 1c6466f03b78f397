import { isShredLayered, newShredKey, openStoredKey, sealWrappedKey, wipe, type StoredKey, type WrappedKey } from '../custody/index.ts';
import type { UseCaseContext } from './context.ts';

/**
 * The use-cases' side of the shred layer (custody/shredLayer.ts): each election's key file is
 * written durably before any row refers to it, read where the wrapped key and the ballots are
 * read, and deleted after the shred has committed. A crash after the file is written but before
 * the rows commit leaves a key file that no committed row uses; it is harmless and stays.
 */

/** A new shred key for the election, already safe on disk when this returns. */
export async function newKeyFile(ctx: UseCaseContext, electionId: string): Promise<Buffer> {
  const key = newShredKey(ctx.random);
  await ctx.keyFiles.write(electionId, key);
  return key;
}

/** The election's key file, made now if it has none (a draft made before the layer, or a test's row). */
export async function keyFileFor(ctx: UseCaseContext, electionId: string): Promise<Buffer> {
  return (await ctx.keyFiles.has(electionId)) ? ctx.keyFiles.read(electionId) : newKeyFile(ctx, electionId);
}

/** The wrapped key as a row stores it: under the shred layer. */
export function storedKey(ctx: UseCaseContext, key: Uint8Array, electionId: string, wrapped: WrappedKey): StoredKey {
  return sealWrappedKey(key, electionId, wrapped, ctx.random);
}

/**
 * The shred key of an election whose stored wrapped key is layered, read from its file
 * (ElectionKeyFileMissing if gone); null for an election made before the layer. The caller wipes it.
 */
export async function shredKeyOf(ctx: UseCaseContext, e: { id: string; wrappedKey: unknown }): Promise<Buffer | null> {
  return isShredLayered(e.wrappedKey) ? ctx.keyFiles.read(e.id) : null;
}

/** The passphrase-wrapped key inside an election's stored value: the one place the wrapped key is read. */
export async function wrappedKeyOf(ctx: UseCaseContext, e: { id: string; wrappedKey: unknown }): Promise<WrappedKey> {
  const key = await shredKeyOf(ctx, e);
  try {
    return openStoredKey(key, e.id, e.wrappedKey);
  } finally {
    if (key) wipe(key);
  }
}

/**
 * Deletes the key files of these elections (all that have one, when no ids are given) once the
 * database says they are shredded. Runs after the shred's transaction has committed: deleting
 * earlier could destroy the key of a shred that then rolled back. Housekeeping runs it for all,
 * so a deletion that failed, or a process that died in between, is finished on the next round.
 */
export async function removeShreddedKeyFiles(ctx: UseCaseContext, ids?: readonly string[]): Promise<number> {
  const candidates = ids ?? (await ctx.keyFiles.list());
  if (candidates.length === 0) return 0;
  let removed = 0;
  for (let i = 0; i < candidates.length; i += 500) {
    const shredded: string[] = await ctx
      .knex('elections')
      .whereIn('id', candidates.slice(i, i + 500))
      .whereNotNull('shredded_at')
      .pluck('id');
    for (const id of shredded) {
      await ctx.keyFiles.remove(id);
      removed++;
    }
  }
  return removed;
}
