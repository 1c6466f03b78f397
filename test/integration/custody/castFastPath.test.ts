import crypto from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { generateCastToken } from '../../../src/custody/index.ts';
import { castBallot } from '../../../src/elections/castBallot.ts';
import { closeElection } from '../../../src/elections/closeElection.ts';
import { CodeAlreadySpent, CodeRevoked, CodeUnknown, ElectionNotOpen } from '../../../src/elections/errors.ts';
import { extendClosing } from '../../../src/elections/extendClosing.ts';
import { revokeCode } from '../../../src/elections/revokeCode.ts';
import { countTurnout } from '../../../src/elections/turnout.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testClock, testContext } from '../../helpers/context.ts';
import { createOrganiser, openElectionFixture } from '../../helpers/fixtures.ts';

const DAY = 24 * 3600_000;

/**
 * After an election's first cast, casts go through one statement (ballotRepo.castInOneStatement)
 * with the election's key and option count remembered in the process. These check that the
 * remembered election never lets through what the database would refuse, and that the one
 * statement keeps the checked path's guarantees. Invented scenario: a tenants' association
 * choosing which repairs to ask the landlord for first.
 */
describe.each(engines)('casting once the election is known [%s]', (engine) => {
  let db: TestDatabase;
  let organiserId: string;
  beforeAll(async () => {
    db = await freshDatabase(engine);
    organiserId = await createOrganiser(testContext(db));
  });
  afterAll(() => db.dispose());

  async function knownElection(ctx: UseCaseContext, codes: number) {
    const f = await openElectionFixture(ctx, organiserId, { codes });
    await castBallot(ctx, { electionId: f.id, code: f.codes[0]!, approvals: [0] }); // the checked path, which remembers it
    return f;
  }

  function statementsOf<T>(run: () => Promise<T>): Promise<{ result: T; statements: string[] }> {
    const statements: string[] = [];
    const listen = (q: { sql: string }) => statements.push(q.sql);
    db.knex.on('query', listen);
    return run().then(
      (result) => {
        db.knex.off('query', listen);
        return { result, statements };
      },
      (err: unknown) => {
        db.knex.off('query', listen);
        throw err;
      },
    );
  }

  it('stores a ballot, spends the code and keeps the token in one statement', async () => {
    const ctx = testContext(db, { now: testClock().now });
    const f = await knownElection(ctx, 3);
    const castToken = generateCastToken(ctx.random);
    const cast = { electionId: f.id, code: f.codes[1]!, approvals: [1, 2], castToken };
    const { result, statements } = await statementsOf(() => castBallot(ctx, cast));
    expect(statements).toHaveLength(1);
    expect(statements[0]).toMatch(/^\s*with e as/);
    expect(await countTurnout(ctx.knex, f.id)).toMatchObject({ ballotsCast: 2 });
    // The same submission again: the same receipt, nothing more stored.
    expect((await castBallot(ctx, cast)).receipt).toBe(result.receipt);
    await expect(castBallot(ctx, { ...cast, castToken: undefined })).rejects.toBeInstanceOf(CodeAlreadySpent);
    expect(await countTurnout(ctx.knex, f.id)).toMatchObject({ ballotsCast: 2 });
  });

  it('refuses at once after "Close now", though the election was known open', async () => {
    const clock = testClock();
    const ctx = testContext(db, { now: clock.now });
    const f = await knownElection(ctx, 2);
    await closeElection(ctx, { electionId: f.id, organiserId: f.organiserId });
    const err = await castBallot(ctx, { electionId: f.id, code: f.codes[1]!, approvals: [1] }).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(ElectionNotOpen);
    expect((err as ElectionNotOpen).reason).toBe('closed');
    const code = await db.knex('ballot_codes').where({ election_id: f.id, spent: true }).count({ n: '*' }).first();
    expect(Number(code?.n)).toBe(1); // only the first cast's
    expect(await countTurnout(ctx.knex, f.id)).toMatchObject({ ballotsCast: 1 });
  });

  it('follows the closing time and its extension', async () => {
    const clock = testClock();
    const ctx = testContext(db, { now: clock.now });
    const f = await knownElection(ctx, 3);
    clock.advance(7 * DAY); // exactly the closing time: closed
    await expect(castBallot(ctx, { electionId: f.id, code: f.codes[1]!, approvals: [1] })).rejects.toBeInstanceOf(ElectionNotOpen);

    const g = await knownElection(ctx, 3);
    await extendClosing(ctx, { electionId: g.id, organiserId: g.organiserId, closesAt: new Date(clock.now().getTime() + 9 * DAY) });
    clock.advance(8 * DAY); // past the first closing time, before the new one
    await castBallot(ctx, { electionId: g.id, code: g.codes[1]!, approvals: [1] });
    clock.advance(DAY); // the new closing time
    await expect(castBallot(ctx, { electionId: g.id, code: g.codes[2]!, approvals: [1] })).rejects.toBeInstanceOf(ElectionNotOpen);
    expect(await countTurnout(ctx.knex, g.id)).toMatchObject({ ballotsCast: 2 });
  });

  it('answers unknown and withdrawn codes precisely', async () => {
    const ctx = testContext(db, { now: testClock().now });
    const f = await knownElection(ctx, 3);
    const other = await openElectionFixture(ctx, f.organiserId, { codes: 1 });
    await expect(castBallot(ctx, { electionId: f.id, code: other.codes[0]!, approvals: [] })).rejects.toBeInstanceOf(CodeUnknown);
    await revokeCode(ctx, { electionId: f.id, organiserId: f.organiserId, code: f.codes[1]! });
    await expect(castBallot(ctx, { electionId: f.id, code: f.codes[1]!, approvals: [] })).rejects.toBeInstanceOf(CodeRevoked);
    expect(await countTurnout(ctx.knex, f.id)).toMatchObject({ ballotsCast: 1 });
  });

  it('draws another receipt when the first is taken, and spends the code once', async () => {
    // A random source that hands the receipt generator (10 bytes) the same bytes for its first
    // draws: the fast path's first receipt then equals the first cast's, already stored.
    const fixed = crypto.randomBytes(10);
    let repeats = 2;
    const random = (n: number) => (n === 10 && repeats > 0 ? (repeats--, Buffer.from(fixed)) : crypto.randomBytes(n));
    const ctx = testContext(db, { now: testClock().now });
    const f = await knownElection(ctx, 3); // codes drawn before the source is switched
    const repeating: UseCaseContext = { ...ctx, random };
    const first = await castBallot(repeating, { electionId: f.id, code: f.codes[1]!, approvals: [1] });
    const { result: second, statements } = await statementsOf(() => castBallot(repeating, { electionId: f.id, code: f.codes[2]!, approvals: [2] }));
    expect(repeats).toBe(0);
    // The taken receipt failed the whole statement (nothing spent), and the same path drew again.
    expect(statements).toHaveLength(2);
    expect(statements.every((q) => /^\s*with e as/.test(q))).toBe(true);
    expect(second.receipt).not.toBe(first.receipt);
    expect(await countTurnout(ctx.knex, f.id)).toMatchObject({ ballotsCast: 3, codesIssued: 3 });
    const spent = await db.knex('ballot_codes').where({ election_id: f.id, spent: true }).count({ n: '*' }).first();
    expect(Number(spent?.n)).toBe(3);
    const stored = await db.knex('ballots').where({ election_id: f.id }).count({ n: '*' }).first();
    expect(Number(stored?.n)).toBe(3);
  });

  it('stores exactly one ballot from 50 parallel casts of one code (OWASP ASVS 5.0 2.3.3, 2.3.4)', async () => {
    const ctx = testContext(db, { now: testClock().now });
    const f = await knownElection(ctx, 2);
    const results = await Promise.allSettled(
      Array.from({ length: 50 }, (_, i) => castBallot(ctx, { electionId: f.id, code: f.codes[1]!, approvals: [i % 3] })),
    );
    expect(results.filter((r) => r.status === 'fulfilled')).toHaveLength(1);
    const refused = results.filter((r) => r.status === 'rejected').map((r) => (r as PromiseRejectedResult).reason);
    expect(refused.every((e) => e instanceof CodeAlreadySpent)).toBe(true);
    const stored = await db.knex('ballots').where({ election_id: f.id }).count({ n: '*' }).first();
    expect(Number(stored?.n)).toBe(2);
    const receipts = await db.knex('receipts').where({ election_id: f.id }).count({ n: '*' }).first();
    expect(Number(receipts?.n)).toBe(2);
  });
});
