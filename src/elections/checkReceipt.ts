import { normaliseReceipt, receiptHash } from '../custody/index.ts';
import { receiptExists } from './ballotRepo.ts';
import type { UseCaseContext } from './context.ts';
import { findElection } from './electionRepo.ts';
import { ElectionNotFound } from './errors.ts';

/**
 * Was a ballot with this receipt stored in this election? Receipts outlive shredding, so
 * the answer stays available after the ciphertexts are gone. It says only "included",
 * never what the ballot said. A receipt of the wrong shape raises ReceiptMalformed.
 */
export async function checkReceipt(ctx: UseCaseContext, input: { electionId: string; receipt: string }): Promise<boolean> {
  const canonical = normaliseReceipt(input.receipt);
  return ctx.knex.transaction(async (trx) => {
    const e = await findElection(trx, input.electionId);
    if (!e) throw new ElectionNotFound();
    return receiptExists(trx, e.id, receiptHash(ctx.secrets.codePepper, e.id, canonical));
  });
}
