import type { Db } from '../db/knex.ts';
import { countReceipts } from './ballotRepo.ts';
import { countCodes } from './codeRepo.ts';
import { ElectionNotFound } from './errors.ts';

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/**
 * What the organiser's dashboard may show: how many ballots were cast and how many codes
 * exist. Never anything per option. Ballots are counted from receipts, which survive
 * shredding, so the figure does not drop to zero after publication.
 */
export async function countTurnout(db: Db, electionId: string): Promise<{ ballotsCast: number; codesIssued: number; codesRevoked: number }> {
  if (!UUID.test(electionId)) throw new ElectionNotFound();
  const ballotsCast = await countReceipts(db, electionId);
  const codes = await countCodes(db, electionId);
  return { ballotsCast, codesIssued: codes.issued, codesRevoked: codes.revoked };
}
