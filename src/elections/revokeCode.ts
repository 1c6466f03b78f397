import { codeHash, normaliseCode } from '../custody/index.ts';
import { recordEvent } from './audit.ts';
import { findCode, revokeCodeHash } from './codeRepo.ts';
import type { UseCaseContext } from './context.ts';
import { ownedElection } from './electionAccess.ts';
import { AlreadyTallied, CodeUnknown } from './errors.ts';

/**
 * Withdraws a code (e.g. handed to the wrong person), so it can no longer be used.
 * The answer is the same whether or not the code was already used: otherwise an organiser
 * who knows who received a code could learn whether that member voted. A used code is
 * marked withdrawn too (its ballot, sealed and unlinked, still counts), so the withdrawn
 * count on the dashboard says nothing either. Revoking twice changes nothing.
 */
export async function revokeCode(ctx: UseCaseContext, input: { electionId: string; organiserId: string; code: string }): Promise<void> {
  const canonical = normaliseCode(input.code); // CodeMalformed / CodeTypo before any lookup
  await ctx.knex.transaction(async (trx) => {
    const e = await ownedElection(trx, input.electionId, input.organiserId, { lock: false });
    if (e.state === 'tallied' || e.state === 'published') throw new AlreadyTallied();
    const hash = codeHash(ctx.secrets.codePepper, e.id, canonical);
    if (await revokeCodeHash(trx, e.id, hash)) {
      await recordEvent(trx, { electionId: e.id, organiserId: input.organiserId, action: 'code-revoked' }, ctx.now());
      return;
    }
    if (!(await findCode(trx, e.id, hash))) throw new CodeUnknown();
  });
}
