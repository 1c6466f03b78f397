import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CodeMalformed, CodeTypo } from '../../../src/custody/index.ts';
import { castBallot } from '../../../src/elections/castBallot.ts';
import { checkCode } from '../../../src/elections/checkCode.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import {
  CodeAlreadySpent,
  CodeRevoked,
  CodeUnknown,
  ElectionNotFound,
  ElectionStateConflict,
  TallyKeyMissing,
} from '../../../src/elections/errors.ts';
import { issueCodes } from '../../../src/elections/issueCodes.ts';
import { revokeCode } from '../../../src/elections/revokeCode.ts';
import { countTurnout } from '../../../src/elections/turnout.ts';
import { InvalidInput } from '../../../src/errors.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { insertOrganiser, scene } from './_fixtures.ts';

/** Changes the last data symbol of a display code: the check symbol then disagrees. */
function withTypo(display: string): string {
  const chars = display.split('');
  const i = chars.length - 2;
  chars[i] = chars[i] === '0' ? '1' : '0';
  return chars.join('');
}

/** A context whose database throws if touched: proves a check happens before any lookup. */
function noDatabase(ctx: UseCaseContext): UseCaseContext {
  const knex = new Proxy(() => undefined, {
    get: () => {
      throw new Error('database touched');
    },
    apply: () => {
      throw new Error('database touched');
    },
  }) as unknown as UseCaseContext['knex'];
  return { ...ctx, knex };
}

describe.each(engines)('ballot codes: issue, check, revoke [%s]', (engine) => {
  let db: TestDatabase;
  beforeAll(async () => {
    db = await freshDatabase(engine);
  });
  afterAll(() => db.dispose());

  it('tells an unknown, a revoked and a mistyped code apart, the typo before any lookup', async () => {
    const s = await scene(db);
    const other = await scene(db);
    const [a, b] = (await issueCodes(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, count: 2 })).codes;
    const [foreign] = (await issueCodes(other.ctx, { electionId: other.electionId, organiserId: other.organiserId, count: 1 })).codes;
    await expect(castBallot(s.ctx, { electionId: s.electionId, code: foreign!, approvals: [] })).rejects.toBeInstanceOf(CodeUnknown);
    await revokeCode(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, code: b! });
    await revokeCode(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, code: b! }); // no change, no error
    await expect(castBallot(s.ctx, { electionId: s.electionId, code: b!, approvals: [] })).rejects.toBeInstanceOf(CodeRevoked);
    // Before a cast a withdrawn code answers like a live one (no code-status oracle for whoever holds the codes).
    await expect(checkCode(s.ctx, { electionId: s.electionId, code: b! })).resolves.toBeUndefined();

    const cut = noDatabase(s.ctx);
    await expect(castBallot(cut, { electionId: s.electionId, code: withTypo(a!), approvals: [] })).rejects.toBeInstanceOf(CodeTypo);
    await expect(checkCode(cut, { electionId: s.electionId, code: withTypo(a!) })).rejects.toBeInstanceOf(CodeTypo);
    await expect(castBallot(cut, { electionId: s.electionId, code: 'ABC', approvals: [] })).rejects.toBeInstanceOf(CodeMalformed);
    await expect(checkCode(s.ctx, { electionId: s.electionId, code: a! })).resolves.toBeUndefined();
    await castBallot(s.ctx, { electionId: s.electionId, code: a!, approvals: [4] });
    await expect(checkCode(s.ctx, { electionId: s.electionId, code: a! })).resolves.toBeUndefined();
    await expect(castBallot(s.ctx, { electionId: s.electionId, code: a!, approvals: [] })).rejects.toBeInstanceOf(CodeAlreadySpent);
    // Revoking a used code answers like revoking an unused one, so it cannot tell an organiser who voted.
    await expect(revokeCode(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, code: a! })).resolves.toBeUndefined();
    // At the cast, withdrawn comes first, so a used-then-withdrawn code answers like a withdrawn unused one.
    await expect(castBallot(s.ctx, { electionId: s.electionId, code: a!, approvals: [] })).rejects.toBeInstanceOf(CodeRevoked);
    await expect(revokeCode(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, code: foreign! })).rejects.toBeInstanceOf(CodeUnknown);
    await expect(countTurnout(db.knex, s.electionId)).resolves.toEqual({ ballotsCast: 1, codesIssued: 2, codesRevoked: 2 });
  });

  it('checkCode changes nothing', async () => {
    const s = await scene(db);
    const [c] = (await issueCodes(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, count: 1 })).codes;
    await checkCode(s.ctx, { electionId: s.electionId, code: c! });
    await checkCode(s.ctx, { electionId: s.electionId, code: c! });
    const row = await db.knex('ballot_codes').where({ election_id: s.electionId }).first();
    expect([row.spent, row.revoked]).toEqual([false, false]);
  });

  it('guards issuing codes: owner only, 1..100000, not after close, and needs a tally key to cast', async () => {
    const s = await scene(db);
    const stranger = await insertOrganiser(db);
    await expect(issueCodes(s.ctx, { electionId: s.electionId, organiserId: stranger, count: 1 })).rejects.toBeInstanceOf(ElectionNotFound);
    for (const count of [0, 100_001, 1.5]) {
      await expect(issueCodes(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, count })).rejects.toBeInstanceOf(InvalidInput);
    }
    s.clock.set('2026-06-08T08:00:00Z');
    await expect(issueCodes(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, count: 1 })).rejects.toBeInstanceOf(ElectionStateConflict);
    const keyless = await scene(db, { withKey: false });
    const [c] = (await issueCodes(keyless.ctx, { electionId: keyless.electionId, organiserId: keyless.organiserId, count: 1 })).codes;
    await expect(castBallot(keyless.ctx, { electionId: keyless.electionId, code: c!, approvals: [] })).rejects.toBeInstanceOf(TallyKeyMissing);
    await expect(castBallot(s.ctx, { electionId: 'not-a-uuid', code: c!, approvals: [] })).rejects.toBeInstanceOf(ElectionNotFound);
  });

  it('issues 100000 codes in one call, all distinct', async () => {
    const s = await scene(db, { state: 'draft' });
    const { codes } = await issueCodes(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, count: 100_000 });
    expect(new Set(codes).size).toBe(100_000);
    await expect(countTurnout(db.knex, s.electionId)).resolves.toMatchObject({ codesIssued: 100_000 });
  });
});
