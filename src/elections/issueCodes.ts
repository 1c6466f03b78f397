import { z } from 'zod';
import { BATCH_SEED_BYTES, codeFromSeed, codeHash, codesFromSeed, decodeBatchSeed, encodeBatchSeed } from '../custody/index.ts';
import { InvalidInput } from '../errors.ts';
import { recordEvent } from './audit.ts';
import { insertCodeHashes } from './codeRepo.ts';
import type { UseCaseContext } from './context.ts';
import { ownedElection } from './electionAccess.ts';
import { CodeBatchUnknown, ElectionStateConflict } from './errors.ts';
import { findCode } from './codeRepo.ts';

export const MAX_CODES_PER_CALL = 100_000;
const countSchema = z.number().int().min(1).max(MAX_CODES_PER_CALL);

/**
 * Issues `count` fresh ballot codes. Only their keyed hashes are stored; the display
 * forms are returned once, for the organiser to hand out, and are never kept. They come from
 * one random batch seed (custody/codeBatch.ts), returned too so the organiser's page can offer
 * the same codes as a file without keeping them anywhere. Allowed in draft and while open,
 * not once voting has closed.
 */
export async function issueCodes(
  ctx: UseCaseContext,
  input: { electionId: string; organiserId: string; count: number },
): Promise<{ codes: string[]; batch: string }> {
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
    if (e.rosterId) {
      throw new ElectionStateConflict(
        'This election’s electorate is a roster: the site mails each member their own code when it opens, and no code is ever shown to you. Choose printed codes on the draft to issue codes here.',
      );
    }
    const seed = Buffer.from(ctx.random(BATCH_SEED_BYTES));
    if (seed.length !== BATCH_SEED_BYTES) throw new Error('random source returned the wrong number of bytes');
    const codes: string[] = [];
    const hashes: Buffer[] = [];
    for (const c of codesFromSeed(seed, e.id, input.count)) {
      codes.push(c.display);
      hashes.push(codeHash(ctx.secrets.codePepper, e.id, c.canonical));
    }
    await insertCodeHashes(trx, e.id, hashes);
    await recordEvent(trx, { electionId: e.id, organiserId: input.organiserId, action: 'codes-issued', detail: { count: input.count } }, now);
    return { codes, batch: encodeBatchSeed(seed) };
  });
}

/**
 * The codes of a batch issued earlier, for the organiser's CSV download. The batch's first and
 * last codes must be issued codes of this election (used or not, withdrawn or not), so only a real
 * batch of the right size comes back; anything else is CodeBatchUnknown. Nothing is recorded:
 * the codes were issued already.
 */
export async function recallCodeBatch(
  ctx: UseCaseContext,
  input: { electionId: string; organiserId: string; batch: string; count: number },
): Promise<{ codes: string[]; title: string }> {
  const seed = decodeBatchSeed(input.batch);
  if (!seed || !countSchema.safeParse(input.count).success) throw new CodeBatchUnknown();
  const e = await ownedElection(ctx.knex, input.electionId, input.organiserId, { lock: false });
  for (const i of [0, input.count - 1]) {
    const c = codeFromSeed(seed, e.id, i);
    if (!(await findCode(ctx.knex, e.id, codeHash(ctx.secrets.codePepper, e.id, c.canonical)))) throw new CodeBatchUnknown();
  }
  // Codes past the batch's end were never issued: refuse a count larger than the batch.
  const next = codeFromSeed(seed, e.id, input.count);
  if (await findCode(ctx.knex, e.id, codeHash(ctx.secrets.codePepper, e.id, next.canonical))) throw new CodeBatchUnknown();
  return { codes: codesFromSeed(seed, e.id, input.count).map((c) => c.display), title: e.title };
}
