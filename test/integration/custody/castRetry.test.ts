import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { generateCastToken } from '../../../src/custody/index.ts';
import { castBallot } from '../../../src/elections/castBallot.ts';
import { CodeAlreadySpent, ElectionNotOpen } from '../../../src/elections/errors.ts';
import { countTurnout } from '../../../src/elections/turnout.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testClock, testContext } from '../../helpers/context.ts';
import { createOrganiser, openElectionFixture } from '../../helpers/fixtures.ts';

// A cast looks for an earlier cast with its token only when it cannot go ahead; these are the
// two ways it cannot, and in both a retry of the same submission must get the first receipt.
describe.each(engines)('a retried cast with its token [%s]', (engine) => {
  let db: TestDatabase;
  beforeAll(async () => {
    db = await freshDatabase(engine);
  });
  afterAll(async () => {
    await db.dispose();
  });

  it('gets the same receipt while voting is open, and after it has ended; without the token it is refused', async () => {
    const clock = testClock();
    const ctx = testContext(db, { now: clock.now });
    const f = await openElectionFixture(ctx, await createOrganiser(ctx), { codes: 2 });
    const castToken = generateCastToken(ctx.random);
    const cast = { electionId: f.id, code: f.codes[0]!, approvals: [0, 2], castToken };
    const { receipt } = await castBallot(ctx, cast);
    expect((await castBallot(ctx, cast)).receipt).toBe(receipt);
    await expect(castBallot(ctx, { ...cast, castToken: undefined })).rejects.toBeInstanceOf(CodeAlreadySpent);

    clock.advance(8 * 24 * 3600_000); // past the closing time
    expect((await castBallot(ctx, cast)).receipt).toBe(receipt);
    await expect(castBallot(ctx, { ...cast, code: f.codes[1]!, castToken: generateCastToken(ctx.random) })).rejects.toBeInstanceOf(ElectionNotOpen);
    expect((await countTurnout(ctx.knex, f.id)).ballotsCast).toBe(1);
  });
});
