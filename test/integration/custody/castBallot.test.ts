import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { sealedLength } from '../../../src/custody/ballot.ts';
import { SHRED_LAYER_BYTES } from '../../../src/custody/index.ts';
import { toBuffer, toCount } from '../../../src/db/knex.ts';
import { castBallot } from '../../../src/elections/castBallot.ts';
import { checkCode } from '../../../src/elections/checkCode.ts';
import { checkReceipt } from '../../../src/elections/checkReceipt.ts';
import { CodeAlreadySpent, ElectionNotOpen, InvalidBallot } from '../../../src/elections/errors.ts';
import { issueCodes } from '../../../src/elections/issueCodes.ts';
import { countTurnout } from '../../../src/elections/turnout.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { scene } from './_fixtures.ts';

describe.each(engines)('casting ballots [%s]', (engine) => {
  let db: TestDatabase;
  beforeAll(async () => {
    db = await freshDatabase(engine);
  });
  afterAll(() => db.dispose());

  it('stores one sealed ballot per code, spends the code and answers the receipt check', async () => {
    const s = await scene(db);
    const { codes } = await issueCodes(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, count: 3 });
    expect(new Set(codes).size).toBe(3);
    const { receipt } = await castBallot(s.ctx, { electionId: s.electionId, code: codes[0]!, approvals: [0, 2] });
    expect(receipt).toMatch(/^[0-9A-HJKMNP-TV-Z]{10}$/);
    await expect(checkReceipt(s.ctx, { electionId: s.electionId, receipt: receipt.toLowerCase() })).resolves.toBe(true);
    await expect(checkReceipt(s.ctx, { electionId: s.electionId, receipt: '0000000000' })).resolves.toBe(false);

    await expect(castBallot(s.ctx, { electionId: s.electionId, code: codes[0]!, approvals: [1] })).rejects.toBeInstanceOf(CodeAlreadySpent);
    await castBallot(s.ctx, { electionId: s.electionId, code: codes[1]!.toLowerCase().replace(/-/g, ' '), approvals: [] });
    const rows = await db.knex('ballots').where({ election_id: s.electionId });
    expect(rows).toHaveLength(2);
    // Same ciphertext size for two ticks and for an abstention (DESIGN §5).
    expect(rows.map((r) => toBuffer(r.sealed).length)).toEqual([sealedLength(5) + SHRED_LAYER_BYTES, sealedLength(5) + SHRED_LAYER_BYTES]);
    const receipts = await db.knex('receipts').where({ election_id: s.electionId }).count({ n: '*' }).first();
    expect(toCount(receipts?.n)).toBe(2);
    await expect(countTurnout(db.knex, s.electionId)).resolves.toEqual({ ballotsCast: 2, codesIssued: 3, codesRevoked: 0 });
  });

  it('refuses ballots outside the voting window, with the reason', async () => {
    const s = await scene(db);
    const codes = (await issueCodes(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, count: 1 })).codes;
    const cast = () => castBallot(s.ctx, { electionId: s.electionId, code: codes[0]!, approvals: [] });
    const reason = async (p: Promise<unknown>) => {
      const e = await p.then(
        () => null,
        (x: unknown) => x,
      );
      expect(e).toBeInstanceOf(ElectionNotOpen);
      return (e as ElectionNotOpen).reason;
    };
    s.clock.set('2026-06-01T07:59:59Z');
    expect(await reason(cast())).toBe('not-yet-open');
    expect(await reason(checkCode(s.ctx, { electionId: s.electionId, code: codes[0]! }))).toBe('not-yet-open');
    s.clock.set('2026-06-08T08:00:00Z'); // closes_at itself is already closed
    expect(await reason(cast())).toBe('closed');
    await db.knex('elections').where({ id: s.electionId }).update({ state: 'draft' });
    s.clock.set('2026-06-02T08:00:00Z');
    expect(await reason(cast())).toBe('draft');
    await db.knex('elections').where({ id: s.electionId }).update({ state: 'closed' });
    expect(await reason(cast())).toBe('closed');
    const row = await db.knex('ballot_codes').where({ election_id: s.electionId }).first();
    expect(row.spent).toBe(false);
  });

  it('accepts only distinct, existing option positions', async () => {
    const s = await scene(db);
    const [c] = (await issueCodes(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, count: 1 })).codes;
    for (const approvals of [[5], [-1], [1, 1], [0.5], ['1' as unknown as number]]) {
      await expect(castBallot(s.ctx, { electionId: s.electionId, code: c!, approvals })).rejects.toBeInstanceOf(InvalidBallot);
    }
    await castBallot(s.ctx, { electionId: s.electionId, code: c!, approvals: [0, 1, 2, 3, 4] });
  });
});
