import { describe, expect, it } from 'vitest';
import { engines } from '../../helpers/databases.ts';
import { castStatements } from '../../bench/support/castQueries.ts';

/**
 * What a member's final cast costs the database, counted (not timed): one statement that checks the
 * window, spends the code and stores receipt and ballot. The election is read for the page only
 * when a cast fails.
 * The ballot-code limit counts failures only, so a correct cast neither reads nor writes it.
 */
describe.each(engines)('the statements of one cast [%s]', (engine) => {
  it('are the one cast statement, and nothing of the attempt limits', async () => {
    const statements = await castStatements(engine);
    const mine = statements.filter((q) => !/^DROP SCHEMA/.test(q)); // the test schema's removal
    expect(mine.some((q) => /rate_limits/.test(q))).toBe(false);
    expect(mine.filter((q) => /^\s*with e as/.test(q))).toHaveLength(1);
    expect(mine.some((q) => /^\s*(BEGIN|COMMIT)/i.test(q))).toBe(false);
    expect(mine).toHaveLength(1);
  });
});
