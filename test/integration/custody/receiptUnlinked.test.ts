import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { receiptHash } from '../../../src/custody/index.ts';
import { castBallot } from '../../../src/elections/castBallot.ts';
import { closeAndTally } from '../../../src/elections/closeAndTally.ts';
import { issueCodes } from '../../../src/elections/issueCodes.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { PASSPHRASE, scene } from './_fixtures.ts';
import { allRowsAsText } from './_scan.ts';

/**
 * A receipt is handed to the member, so anything in a ballot row derived from it would let
 * whoever later sees that receipt (and holds the database, pepper and passphrase) open that
 * member's ballot. Receipts prove inclusion only (DESIGN §5), so a ballot row must hold
 * nothing but its random id, election and ciphertext (common practice: receipt-freeness).
 */
describe.each(engines)('a receipt points to no ballot [%s]', (engine) => {
  let db: TestDatabase;
  beforeAll(async () => {
    db = await freshDatabase(engine);
  });
  afterAll(() => db.dispose());

  it('no ballot row holds a receipt hash, before or after the tally', async () => {
    const s = await scene(db);
    const { codes } = await issueCodes(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, count: 3 });
    const hashes: string[] = [];
    for (const [i, code] of codes.entries()) {
      const { receipt } = await castBallot(s.ctx, { electionId: s.electionId, code, approvals: [i] });
      hashes.push(receiptHash(s.ctx.secrets.codePepper, s.electionId, receipt).toString('hex'));
    }
    const linesOf = (text: string, table: string) =>
      text
        .split('\n')
        .filter((l) => l.startsWith(`${table}: `))
        .join('\n');
    const check = async () => {
      const text = await allRowsAsText(db);
      // Control: the receipts table does hold each hash, so the scan can see one.
      for (const h of hashes) expect(linesOf(text, 'receipts')).toContain(h);
      expect(linesOf(text, 'ballots').split('\n')).toHaveLength(3);
      for (const h of hashes) expect(linesOf(text, 'ballots')).not.toContain(h);
    };
    await check();
    s.clock.set('2026-06-08T09:00:00Z');
    await closeAndTally(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, passphrase: PASSPHRASE });
    await check();
  });
});
