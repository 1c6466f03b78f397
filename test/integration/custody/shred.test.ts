import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openingKey, openBallot, storedKeySchema, wrappedKeySchema } from '../../../src/custody/index.ts';
import { innerBallots, secretKeyFromRow } from '../../helpers/storedKeys.ts';
import { toBuffer, toCount } from '../../../src/db/knex.ts';
import { castBallot } from '../../../src/elections/castBallot.ts';
import { checkReceipt } from '../../../src/elections/checkReceipt.ts';
import { closeAndTally } from '../../../src/elections/closeAndTally.ts';
import { AlreadyPublished, AlreadyTallied, ElectionStateConflict, NotTallied, ResultNotPublished } from '../../../src/elections/errors.ts';
import { issueCodes } from '../../../src/elections/issueCodes.ts';
import { publishResult } from '../../../src/elections/publishResult.ts';
import { shredDue, shredElection } from '../../../src/elections/shred.ts';
import { countTurnout } from '../../../src/elections/turnout.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { PASSPHRASE, electionRow, scene, type ElectionSetup } from './_fixtures.ts';
import { allRowsAsText } from './_scan.ts';

const DAY = 24 * 3600_000;

describe.each(engines)('shredding [%s]', (engine) => {
  let db: TestDatabase;
  beforeAll(async () => {
    db = await freshDatabase(engine);
  });
  afterAll(() => db.dispose());

  async function tallied(setup: ElectionSetup) {
    const s = await scene(db, setup);
    const { codes } = await issueCodes(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, count: 3 });
    const receipts: string[] = [];
    for (const [i, code] of codes.entries()) {
      receipts.push((await castBallot(s.ctx, { electionId: s.electionId, code, approvals: [i] })).receipt);
    }
    s.clock.set('2026-06-08T09:00:00Z');
    await closeAndTally(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, passphrase: PASSPHRASE });
    return { ...s, receipts };
  }

  it('shreds at publication by default: key and ciphertexts gone, nothing can be opened', async () => {
    const s = await tallied({});
    const before = await electionRow(db, s.electionId);
    const sealed = (await db.knex('ballots').where({ election_id: s.electionId })).map((r) => toBuffer(r.sealed));
    // Control: before shredding, what is stored (wrapped key + passphrase) does open the ballots.
    const sk = await secretKeyFromRow(s.ctx, s.electionId, before.wrapped_key, PASSPHRASE);
    const k = openingKey(toBuffer(before.public_key), sk, s.electionId, 5);
    expect(
      (await innerBallots(s.ctx, s.electionId, before.wrapped_key, sealed))
        .map((c) => openBallot(k, c))
        .flat()
        .sort(),
    ).toEqual([0, 1, 2]);

    const hasWrappedKey = (text: string) => text.split('\n').some((line) => /"sealed"/.test(line) && /"version"/.test(line));
    const beforeText = await allRowsAsText(db);
    expect(hasWrappedKey(beforeText)).toBe(true); // control: the scan does see a stored wrapped key
    expect(sealed.every((c) => beforeText.includes(c.toString('hex')))).toBe(true); // and the ciphertexts

    await expect(publishResult(s.ctx, { electionId: s.electionId, organiserId: s.organiserId })).resolves.toBeUndefined();
    const after = await electionRow(db, s.electionId);
    expect(after.state).toBe('published');
    expect(after.wrapped_key).toBeNull();
    expect(after.shredded_at).not.toBeNull();
    expect(toCount((await db.knex('ballots').where({ election_id: s.electionId }).count({ n: '*' }).first())?.n)).toBe(0);
    const actions = (await db.knex('audit_events').where({ election_id: s.electionId }).orderBy('id')).map((e) => e.action);
    expect(actions.slice(-2)).toEqual(['published', 'shredded']);

    // No row anywhere still holds a wrapped key or any of the ciphertexts.
    const everything = await allRowsAsText(db);
    for (const c of sealed) expect(everything.includes(c.toString('hex'))).toBe(false);
    expect(hasWrappedKey(everything)).toBe(false);
    expect(wrappedKeySchema.safeParse(after.wrapped_key).success).toBe(false);
    expect(storedKeySchema.safeParse(after.wrapped_key).success).toBe(false);
    await expect(s.ctx.keyFiles.has(s.electionId)).resolves.toBe(false); // the key file is gone too
    await expect(closeAndTally(s.ctx, { electionId: s.electionId, organiserId: s.organiserId, passphrase: PASSPHRASE })).rejects.toBeInstanceOf(
      AlreadyTallied,
    );
    await expect(publishResult(s.ctx, { electionId: s.electionId, organiserId: s.organiserId })).rejects.toBeInstanceOf(AlreadyPublished);

    // Receipts and turnout outlive the ciphertexts.
    await expect(checkReceipt(s.ctx, { electionId: s.electionId, receipt: s.receipts[1]! })).resolves.toBe(true);
    await expect(countTurnout(db.knex, s.electionId)).resolves.toEqual({ ballotsCast: 3, codesIssued: 3, codesRevoked: 0 });
  });

  it('keeps ballots sealed for N days, then the retention job shreds them once', async () => {
    const s = await tallied({ retentionDays: 7 });
    await publishResult(s.ctx, { electionId: s.electionId, organiserId: s.organiserId });
    const row = await electionRow(db, s.electionId);
    expect(new Date(row.shred_after as string).getTime()).toBe(s.clock.now().getTime() + 7 * DAY);
    expect(row.wrapped_key).not.toBeNull();
    s.clock.advance(7 * DAY - 1);
    expect(await shredDue(s.ctx)).toBe(0);
    s.clock.advance(1);
    expect(await shredDue(s.ctx)).toBe(1);
    expect(await shredDue(s.ctx)).toBe(0);
    const after = await electionRow(db, s.electionId);
    expect(after.wrapped_key).toBeNull();
    expect(toCount((await db.knex('ballots').where({ election_id: s.electionId }).count({ n: '*' }).first())?.n)).toBe(0);
    const shredEvents = await db.knex('audit_events').where({ election_id: s.electionId, action: 'shredded' });
    expect(shredEvents).toHaveLength(1);
    expect(shredEvents[0].organiser_id).toBeNull(); // the job, not a person
  });

  it('lets the organiser shred early after publication, never before it', async () => {
    const open = await scene(db);
    await expect(shredElection(open.ctx, { electionId: open.electionId, organiserId: open.organiserId })).rejects.toBeInstanceOf(
      ElectionStateConflict,
    );
    await expect(publishResult(open.ctx, { electionId: open.electionId, organiserId: open.organiserId })).rejects.toBeInstanceOf(NotTallied);
    const s = await tallied({ retentionDays: 30 });
    // A drawn result that was never published cannot be shredded (every draw is published).
    await expect(shredElection(s.ctx, { electionId: s.electionId, organiserId: s.organiserId })).rejects.toBeInstanceOf(ResultNotPublished);
    await publishResult(s.ctx, { electionId: s.electionId, organiserId: s.organiserId });
    await shredElection(s.ctx, { electionId: s.electionId, organiserId: s.organiserId });
    await shredElection(s.ctx, { electionId: s.electionId, organiserId: s.organiserId }); // already done: no change
    expect((await electionRow(db, s.electionId)).wrapped_key).toBeNull();
    expect(await db.knex('audit_events').where({ election_id: s.electionId, action: 'shredded' })).toHaveLength(1);
  });
});
