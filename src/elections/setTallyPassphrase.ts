import { createElectionKeys, wipe } from '../custody/index.ts';
import { recordEvent } from './audit.ts';
import type { UseCaseContext } from './context.ts';
import { ownedElection } from './electionAccess.ts';
import { ElectionStateConflict } from './errors.ts';
import { keyFileFor, storedKey } from './shredKeys.ts';

/**
 * Makes the election key pair and stores the public key and the wrapped secret key
 * (DESIGN §5). Only in draft: once voting opens the key is fixed, since ballots are
 * sealed to it. The passphrase itself is never stored and cannot be recovered.
 */
export async function setTallyPassphrase(ctx: UseCaseContext, input: { electionId: string; organiserId: string; passphrase: string }): Promise<void> {
  await ctx.knex.transaction(async (trx) => {
    const e = await ownedElection(trx, input.electionId, input.organiserId, { lock: true });
    if (e.state !== 'draft') {
      throw new ElectionStateConflict('The tally passphrase can only be set before voting opens.');
    }
    const { publicKey, wrapped } = await createElectionKeys({
      passphrase: input.passphrase,
      electionId: e.id,
      kdf: ctx.kdf,
      random: ctx.random,
    });
    const shredKey = await keyFileFor(ctx, e.id);
    const stored = storedKey(ctx, shredKey, e.id, wrapped);
    wipe(shredKey);
    const now = ctx.now();
    await trx('elections')
      .where({ id: e.id })
      .update({ public_key: publicKey, wrapped_key: JSON.stringify(stored), updated_at: now });
    await recordEvent(trx, { electionId: e.id, organiserId: input.organiserId, action: 'tally-key-set' }, now);
  });
}
