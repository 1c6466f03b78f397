import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { castBallot } from '../../../src/elections/castBallot.ts';
import { closeAndTally } from '../../../src/elections/closeAndTally.ts';
import { ElectionKeyFileMissing } from '../../../src/elections/errors.ts';
import { findElection } from '../../../src/elections/electionRepo.ts';
import { issueCodes } from '../../../src/elections/issueCodes.ts';
import { testApp } from '../../helpers/app.ts';
import { testContext, testKeyDirectory } from '../../helpers/context.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { makeOrganiser, postForm, signedIn } from '../web/organiseSupport.ts';
import { PASSPHRASE, scene } from './_fixtures.ts';

/**
 * Without its key file an election takes no ballot and counts none: a typed error that changes
 * nothing (no code spent, no tally claimed), and a page that names no path. Putting the file back
 * (the operator restoring the key directory) lets both go ahead.
 */
describe.each(engines)('an election whose key file is missing [%s]', (engine) => {
  let db: TestDatabase;
  beforeAll(async () => {
    db = await freshDatabase(engine);
  });
  afterAll(() => db.dispose());

  function hide(electionId: string): () => void {
    const { dir } = testKeyDirectory(db);
    const file = path.join(dir, `${electionId}.key`);
    const aside = `${file}.aside`;
    fs.renameSync(file, aside);
    return () => fs.renameSync(aside, file);
  }

  it('refuses a cast without spending the code, and a tally without claiming it; both work once it is back', async () => {
    const s = await scene(db);
    const { codes } = await issueCodes(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, count: 2 });
    let restore = hide(s.electionId);
    await expect(castBallot(s.ctx, { electionId: s.electionId, code: codes[0]!, approvals: [1] })).rejects.toBeInstanceOf(ElectionKeyFileMissing);
    expect((await db.knex('ballot_codes').where({ election_id: s.electionId, spent: true })).length).toBe(0);
    expect((await db.knex('ballots').where({ election_id: s.electionId })).length).toBe(0);
    restore();
    await castBallot(s.ctx, { electionId: s.electionId, code: codes[0]!, approvals: [1] });

    s.clock.set('2026-06-08T09:00:00Z');
    restore = hide(s.electionId);
    const input = { electionId: s.electionId, organiserId: s.organiserId, passphrase: PASSPHRASE };
    await expect(closeAndTally(s.ctx, input)).rejects.toBeInstanceOf(ElectionKeyFileMissing);
    const e = (await findElection(db.knex, s.electionId))!;
    expect([e.state, e.tallyClaim, e.tallyStartedAt]).toEqual(['open', null, null]);
    restore();
    await expect(closeAndTally(s.ctx, input)).resolves.toMatchObject({ winners: [expect.any(String)] });
  });

  it('the tally page answers 503 with the named error and no file path', async () => {
    const web = await freshDatabase(engine);
    try {
      await tallyPage(web);
    } finally {
      await web.dispose();
    }
  });

  async function tallyPage(db: TestDatabase) {
    const me = await makeOrganiser(testContext(db), 'secretary@tenants.example'); // the site's first organiser
    const s = await scene(db, { state: 'closed' });
    await db.knex('elections').where({ id: s.electionId }).update({ owner_id: me.id });
    const app = testApp(s.ctx);
    const agent = await signedIn(app, me.email);
    fs.renameSync(path.join(testKeyDirectory(db).dir, `${s.electionId}.key`), path.join(testKeyDirectory(db).dir, 'aside'));
    const page = `/organise/elections/${s.electionId}/tally`;
    const res = await postForm(agent, page, page, { passphrase: PASSPHRASE });
    expect(res.status).toBe(503);
    expect(res.text).toContain('cannot reach the key file of this election');
    expect(res.text).not.toContain(testKeyDirectory(db).dir);
    expect(res.text).not.toContain('.key');
    expect(res.text).not.toMatch(/at .+\.ts:\d+/); // no stack
  }
});
