import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { codeBytes, encodeBallot, normaliseCode } from '../../../src/custody/index.ts';
import { secretKeyFromRow } from '../../helpers/storedKeys.ts';
import { castBallot } from '../../../src/elections/castBallot.ts';
import { closeAndTally } from '../../../src/elections/closeAndTally.ts';
import { issueCodes } from '../../../src/elections/issueCodes.ts';
import { publishResult } from '../../../src/elections/publishResult.ts';
import { revokeCode } from '../../../src/elections/revokeCode.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { PASSPHRASE, electionRow, scene } from './_fixtures.ts';
import { allRowsAsText } from './_scan.ts';

/** Every form a secret could take in a row's text: as typed, upper/lower case, hex and base64 of its bytes. */
function forms(secret: string | Buffer): string[] {
  const bytes = typeof secret === 'string' ? Buffer.from(secret, 'utf8') : secret;
  const out = [bytes.toString('hex'), bytes.toString('base64').replace(/=+$/, ''), bytes.toString('base64url')];
  if (typeof secret === 'string') out.push(secret, secret.toLowerCase(), secret.toUpperCase());
  return out;
}

describe.each(engines)('no plaintext at rest [%s]', (engine) => {
  let db: TestDatabase;
  beforeAll(async () => {
    db = await freshDatabase(engine);
  });
  afterAll(() => db.dispose());

  it('after casting, tallying and publishing, no row holds a code, receipt, passphrase, key or plaintext ballot', async () => {
    // Keep ciphertexts after publication (retention 30 days) so the scan also covers them.
    const s = await scene(db, { retentionDays: 30, publishTurnout: true });
    const { codes } = await issueCodes(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, count: 12 });
    const ballots = [[0], [1, 2], [], [4], [0, 1, 2, 3, 4], [2], [3, 1], [0, 4], [2, 3], [1]];
    const receipts: string[] = [];
    for (const [i, approvals] of ballots.entries()) {
      receipts.push((await castBallot(s.ctx, { electionId: s.electionId, code: codes[i]!, approvals })).receipt);
    }
    await revokeCode(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, code: codes[10]! });
    const sk = await secretKeyFromRow(s.ctx, s.electionId, (await electionRow(db, s.electionId)).wrapped_key, PASSPHRASE);
    s.clock.set('2026-06-08T09:00:00Z');
    await closeAndTally(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, passphrase: PASSPHRASE });
    await publishResult(s.ctx, { electionId: s.electionId, organiserId: s.organiserId });

    const secrets: Array<[string, string | Buffer]> = [
      ['passphrase', PASSPHRASE],
      ['election secret key', sk],
    ];
    secrets.push(['code pepper', s.ctx.secrets.codePepper], ['signing seed', s.ctx.secrets.signingSeed]);
    for (const code of codes) {
      const canonical = normaliseCode(code);
      secrets.push(['code', code], ['code', canonical], ['code bytes', codeBytes(canonical)]);
      secrets.push(['code body', canonical.slice(0, 26)]);
    }
    for (const r of receipts) secrets.push(['receipt', r]);
    for (const b of ballots) secrets.push(['plaintext ballot', encodeBallot(s.electionId, 5, b)]);

    const text = await allRowsAsText(db);
    const lower = text.toLowerCase();
    // Control: the scan sees what is meant to be there (ciphertexts, the signed result).
    expect(text).toContain('ballots: (');
    expect(text).toContain('statements: ('); // the signed statement of the draw
    expect(text).toContain('privacy_ledger: (');
    for (const [what, secret] of secrets) {
      for (const form of forms(secret)) {
        const found = /^[0-9a-f]+$/.test(form) || form === form.toLowerCase() ? lower.includes(form.toLowerCase()) : text.includes(form);
        expect({ what, found }).toEqual({ what, found: false });
      }
    }

    // Negative control: a leak planted in a new table (bytea and text) is found by the same scan.
    await db.knex.schema.createTable('leak_probe', (t) => {
      t.binary('b');
      t.text('t');
    });
    try {
      await db.knex('leak_probe').insert({ b: encodeBallot(s.electionId, 5, ballots[1]!), t: `x${receipts[0]!.toLowerCase()}y` });
      const leaked = await allRowsAsText(db);
      expect(leaked.toLowerCase().includes(encodeBallot(s.electionId, 5, ballots[1]!).toString('hex'))).toBe(true);
      expect(leaked.toLowerCase().includes(receipts[0]!.toLowerCase())).toBe(true);
    } finally {
      await db.knex.schema.dropTable('leak_probe');
    }
  });
});
