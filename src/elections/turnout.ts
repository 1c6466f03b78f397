import type { Db } from '../db/knex.ts';
import { isUuid } from '../custody/ids.ts';
import { countReceipts } from './ballotRepo.ts';
import { countCodes } from './codeRepo.ts';
import { ElectionNotFound } from './errors.ts';

/**
 * The exact number of ballots cast and of codes issued and withdrawn, read straight from the rows,
 * for tests and checks. No organiser’s page shows it: the dashboard (dashboard.ts) reads only the
 * codes, since a live count would tell an organiser watching a member whether they voted; the
 * exact turnout reaches anyone only inside a drawn result whose organiser chose before opening to
 * publish it. Whoever can read the database can count the same rows (README, threat model). Never
 * anything per option. Ballots are counted from receipts, which survive shredding.
 */
export async function countTurnout(db: Db, electionId: string): Promise<{ ballotsCast: number; codesIssued: number; codesRevoked: number }> {
  if (!isUuid(electionId)) throw new ElectionNotFound();
  const ballotsCast = await countReceipts(db, electionId);
  const codes = await countCodes(db, electionId);
  return { ballotsCast, codesIssued: codes.issued, codesRevoked: codes.revoked };
}
