import { z } from 'zod';
import { codeHash, generateCode } from '../custody/index.ts';
import { InvalidInput } from '../errors.ts';
import { recordEvent } from './audit.ts';
import { insertCodeHashes } from './codeRepo.ts';
import type { UseCaseContext } from './context.ts';
import { ownedElection } from './electionAccess.ts';
import { ElectionStateConflict } from './errors.ts';

export const MAX_CODES_PER_CALL = 100_000;
const countSchema = z.number().int().min(1).max(MAX_CODES_PER_CALL);

/**
 * Issues `count` fresh ballot codes. Only their keyed hashes are stored; the display
 * forms are returned once, for the organiser to hand out, and are never kept.
 * Allowed in draft and while open, not once voting has closed.
 */
export async function issueCodes(
  ctx: UseCaseContext,
  input: { electionId: string; organiserId: string; count: number },
): Promise<{ codes: string[] }> {
  if (!countSchema.safeParse(input.count).success) {
    const message = `Choose between 1 and ${MAX_CODES_PER_CALL} codes.`;
    throw new InvalidInput(message, [{ path: 'count', message }]);
  }
  return ctx.knex.transaction(async (trx) => {
    // No row lock: issuing 100000 codes must not hold up members casting meanwhile.
    const e = await ownedElection(trx, input.electionId, input.organiserId, { lock: false });
    const now = ctx.now();
    if (!(e.state === 'draft' || (e.state === 'open' && now < e.closesAt))) {
      throw new ElectionStateConflict('Ballot codes can only be issued before voting closes.');
    }
    const codes: string[] = [];
    const hashes: Buffer[] = [];
    for (let i = 0; i < input.count; i++) {
      const c = generateCode(ctx.random);
      codes.push(c.display);
      hashes.push(codeHash(ctx.secrets.codePepper, e.id, c.canonical));
    }
    await insertCodeHashes(trx, e.id, hashes);
    await recordEvent(
      trx,
      { electionId: e.id, organiserId: input.organiserId, action: 'codes-issued', detail: { count: input.count } },
      now,
    );
    return { codes };
  });
}
