import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { toCount } from '../../../src/db/knex.ts';
import { castBallot } from '../../../src/elections/castBallot.ts';
import { CodeAlreadySpent } from '../../../src/elections/errors.ts';
import { issueCodes } from '../../../src/elections/issueCodes.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { scene } from './_fixtures.ts';

describe.runIf(engines.includes('postgres'))('double use under concurrency [postgres]', () => {
  let db: TestDatabase;
  beforeAll(async () => {
    db = await freshDatabase('postgres');
  });
  afterAll(() => db.dispose());

  it('stores exactly one ballot from 50 parallel casts of one code (OWASP ASVS 5.0 2.3.3, 2.3.4)', async () => {
    const s = await scene(db);
    const [code] = (await issueCodes(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, count: 1 })).codes;
    const results = await Promise.allSettled(
      Array.from({ length: 50 }, (_, i) => castBallot(s.ctx, { electionId: s.electionId, code: code!, approvals: [i % 5] })),
    );
    const ok = results.filter((r) => r.status === 'fulfilled');
    const refused = results.filter((r) => r.status === 'rejected').map((r) => (r as PromiseRejectedResult).reason);
    expect(ok).toHaveLength(1);
    expect(refused.every((e) => e instanceof CodeAlreadySpent)).toBe(true);
    const n = await db.knex('ballots').where({ election_id: s.electionId }).count({ n: '*' }).first();
    expect(toCount(n?.n)).toBe(1);
    const r = await db.knex('receipts').where({ election_id: s.electionId }).count({ n: '*' }).first();
    expect(toCount(r?.n)).toBe(1);
  });
});
