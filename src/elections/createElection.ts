import { createElectionKeys, checkTallyPassphrase, randomUuid, wipe } from '../custody/index.ts';
import { recordEvent } from './audit.ts';
import type { UseCaseContext } from './context.ts';
import { checkDraft, type DraftInput } from './draft.ts';
import { insertDraft } from './draftRepo.ts';
import { ownedElection } from './electionAccess.ts';
import { checkElectorate } from './electorate.ts';
import { newKeyFile, storedKey } from './shredKeys.ts';

/**
 * Creates a draft election and its key pair. The tally passphrase is used here once, to wrap
 * the election secret key (createElectionKeys), and is never stored: only the wrapped key is.
 * `copyOf`: the election the draft was made from (copyElection.ts), checked again here as one
 * this organiser can see, and told on its own record ('copied').
 */
export async function createElection(
  ctx: UseCaseContext,
  input: { organiserId: string; draft: DraftInput; passphrase: string; copyOf?: string },
): Promise<{ electionId: string }> {
  const draft = checkDraft(input.draft);
  checkTallyPassphrase(input.passphrase);
  const id = randomUuid(ctx.random);
  // Argon2id runs before the transaction, so no connection is held while it works.
  const { publicKey, wrapped } = await createElectionKeys({ passphrase: input.passphrase, electionId: id, kdf: ctx.kdf, random: ctx.random });
  // The key file is on disk before the row that refers to it is written (shredKeys.ts).
  const shredKey = await newKeyFile(ctx, id);
  const wrappedKey = storedKey(ctx, shredKey, id, wrapped);
  wipe(shredKey);
  const now = ctx.now();
  try {
    await ctx.knex.transaction(async (trx) => {
      const source = input.copyOf === undefined ? null : await ownedElection(trx, input.copyOf, input.organiserId, { lock: false });
      await checkElectorate(trx, draft.rosterId, input.organiserId);
      await insertDraft(trx, { id, ownerId: input.organiserId, draft, publicKey, wrappedKey, at: now });
      await recordEvent(
        trx,
        { electionId: id, organiserId: input.organiserId, action: 'created', ...(source ? { detail: { copy: true } } : {}) },
        now,
      );
      if (source) await recordEvent(trx, { electionId: source.id, organiserId: input.organiserId, action: 'copied' }, now);
    });
  } catch (err) {
    await ctx.keyFiles.remove(id).catch(() => undefined); // no row refers to it
    throw err;
  }
  return { electionId: id };
}
