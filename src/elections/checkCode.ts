import { codeHash, normaliseCode } from '../custody/index.ts';
import { assertCodeUsable } from './codeRepo.ts';
import type { UseCaseContext } from './context.ts';
import { votingElection } from './electionAccess.ts';

/**
 * The member's code-entry step, before the ballot is shown: same checks and typed
 * errors as castBallot (CodeMalformed, CodeTypo, ElectionNotFound, ElectionNotOpen,
 * CodeUnknown, CodeAlreadySpent, CodeRevoked), and no change of state.
 */
export async function checkCode(ctx: UseCaseContext, input: { electionId: string; code: string }): Promise<void> {
  const canonical = normaliseCode(input.code);
  await ctx.knex.transaction(async (trx) => {
    const e = await votingElection(trx, input.electionId, ctx.now());
    await assertCodeUsable(trx, e.id, codeHash(ctx.secrets.codePepper, e.id, canonical));
  });
}
