import { codeHash, normaliseCode } from '../custody/index.ts';
import { recordEvent } from './audit.ts';
import { findCode, revokeCodeHash } from './codeRepo.ts';
import type { UseCaseContext } from './context.ts';
import { ownedElection } from './electionAccess.ts';
import { AlreadyTallied, CodeAlreadySpent, CodeUnknown } from './errors.ts';

/**
 * Withdraws a code before it is used (e.g. handed to the wrong person). Revoking an
 * already revoked code changes nothing. A spent code cannot be revoked: its ballot is
 * sealed and not linked to it, so there would be nothing to take back.
 */
export async function revokeCode(
  ctx: UseCaseContext,
  input: { electionId: string; organiserId: string; code: string },
): Promise<void> {
  const canonical = normaliseCode(input.code); // CodeMalformed / CodeTypo before any lookup
  await ctx.knex.transaction(async (trx) => {
    const e = await ownedElection(trx, input.electionId, input.organiserId, { lock: false });
    if (e.state === 'tallied' || e.state === 'published') throw new AlreadyTallied();
    const hash = codeHash(ctx.secrets.codePepper, e.id, canonical);
    if (await revokeCodeHash(trx, e.id, hash)) {
      await recordEvent(trx, { electionId: e.id, organiserId: input.organiserId, action: 'code-revoked' }, ctx.now());
      return;
    }
    const code = await findCode(trx, e.id, hash);
    if (!code) throw new CodeUnknown();
    if (code.spent) throw new CodeAlreadySpent();
  });
}
