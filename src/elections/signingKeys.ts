import type { UseCaseContext } from './context.ts';
import { findSigningKey, listSigningKeys, type SigningKey } from './signingKeyRepo.ts';

/** Every public signing key this instance has used, oldest first (the keys document and page). */
export async function publicSigningKeys(ctx: UseCaseContext): Promise<SigningKey[]> {
  return listSigningKeys(ctx.knex);
}

/** One public signing key by its id; null when there is none (or the id is malformed). */
export async function publicSigningKey(ctx: UseCaseContext, keyId: string): Promise<SigningKey | null> {
  return findSigningKey(ctx.knex, keyId);
}
