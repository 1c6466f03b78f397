import { codeHash, normaliseCode } from '../custody/index.ts';
import { assertCodeKnown } from './codeRepo.ts';
import type { UseCaseContext } from './context.ts';
import { votingElection } from './electionAccess.ts';

/**
 * The member's code-entry and confirmation steps: CodeMalformed, CodeTypo, ElectionNotFound,
 * ElectionNotOpen and CodeUnknown, and no change of state. Never CodeAlreadySpent or
 * CodeRevoked: before a cast, a spent, a live and a withdrawn code must look the same, or the
 * organiser (who holds every code) could probe who voted. "Already used" comes only at the
 * cast, which spends a live code, so a probe is never silent.
 */
export async function checkCode(ctx: UseCaseContext, input: { electionId: string; code: string }): Promise<void> {
  const canonical = normaliseCode(input.code);
  await ctx.knex.transaction(async (trx) => {
    const e = await votingElection(trx, input.electionId, ctx.now());
    await assertCodeKnown(trx, e.id, codeHash(ctx.secrets.codePepper, e.id, canonical));
  });
}
