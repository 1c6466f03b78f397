import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { castBallot } from '../../../src/elections/castBallot.ts';
import { closeAndTally } from '../../../src/elections/closeAndTally.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { cancelNotice, scheduleNotice } from '../../../src/elections/mailings.ts';
import { publishResult } from '../../../src/elections/publishResult.ts';
import { sendDueMail } from '../../../src/elections/sendMail.ts';
import { InvalidInput } from '../../../src/errors.ts';
import { createMailer } from '../../../src/mail/createMailer.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { FIXTURE_PASSPHRASE, createOrganiser } from '../../helpers/fixtures.ts';
import { testClock, testContext } from '../../helpers/context.ts';
import { codeIn, rosterElection, rosterWith } from '../../helpers/roster.ts';
import { startSmtp, type LoopbackSmtp } from '../../helpers/smtp.ts';

/**
 * Notices the organiser schedules, sent by the sender once each, when due, to the whole roster
 * (the site cannot tell who voted, so a member who voted gets them too, and each says so):
 * voting opens, N hours before closing, result published. A cancelled notice, or one about voting
 * that falls due after voting closed, is never sent.
 */
const MEMBERS = ['bow@rowing.example', 'two@rowing.example', 'three@rowing.example', 'stroke@rowing.example'];

describe.each(engines)('notices to the roster [%s]', (engine) => {
  let db: TestDatabase;
  let smtp: LoopbackSmtp;
  let ctx: UseCaseContext;
  const clock = testClock('2026-06-01T09:00:00Z');
  let organiserId: string;
  let electionId: string;
  const HOUR = 3600_000;

  beforeAll(async () => {
    db = await freshDatabase(engine);
    smtp = await startSmtp();
    const mailer = createMailer({ smtpUrl: smtp.url, from: { name: 'Rowing club vote', address: 'vote@rowing.example' }, outboxDir: '/nonexistent' });
    ctx = { ...testContext(db, { now: clock.now }), mail: { mailer, publicUrl: 'https://vote.rowing.example' } };
    organiserId = await createOrganiser(ctx, 'captain@rowing.example');
    const rosterId = await rosterWith(
      ctx,
      organiserId,
      MEMBERS.map((email) => ({ email })),
    );
    // Opens in 2 hours, closes 48 hours later.
    electionId = await rosterElection(ctx, organiserId, rosterId, { open: false, opensInHours: 2, closesInHours: 48 });
  });
  afterAll(async () => {
    await ctx.mail?.mailer.close();
    await smtp.close();
    await db.dispose();
  });

  const subjects = () => smtp.received.map((m) => m.mail.subject ?? '');
  const countOf = (subject: string) => subjects().filter((s) => s === subject).length;
  async function round() {
    const r = await sendDueMail(ctx);
    await smtp.waitFor(smtp.received.length);
    return r;
  }

  it('refuses a notice it cannot send, with a clear message', async () => {
    for (const notice of [
      { kind: 'closing', hoursBefore: 0 },
      { kind: 'closing', hoursBefore: 'soon' },
      { kind: 'closing', hoursBefore: 721 },
      { kind: 'weekly' },
    ]) {
      await expect(scheduleNotice(ctx, { electionId, organiserId, notice })).rejects.toBeInstanceOf(InvalidInput);
    }
    await expect(scheduleNotice(ctx, { electionId, organiserId, notice: { kind: 'closing', hoursBefore: 0 } })).rejects.toThrow(
      'Give at least 1 hour.',
    );
  });

  it('sends each scheduled notice once, when due, to every member', async () => {
    for (const notice of [{ kind: 'opens' }, { kind: 'closing', hoursBefore: '24' }, { kind: 'closing', hoursBefore: 1 }, { kind: 'published' }]) {
      await scheduleNotice(ctx, { electionId, organiserId, notice });
    }
    await expect(scheduleNotice(ctx, { electionId, organiserId, notice: { kind: 'opens' } })).rejects.toThrow('scheduled already');
    const oneHour = await db.knex('mailings').where({ election_id: electionId, kind: 'closing', hours_before: 1 }).first('id');
    await cancelNotice(ctx, { electionId, organiserId, mailingId: oneHour.id });

    // A draft sends nothing.
    expect(await round()).toMatchObject({ sent: 0 });
    // Locked and scheduled: the invitations go at once (each says when voting opens); the opening notice waits.
    const { openElection } = await import('../../../src/elections/openElection.ts');
    await openElection(ctx, { electionId, organiserId, mode: 'schedule' });
    expect(await round()).toMatchObject({ sent: MEMBERS.length });
    expect(countOf('Your ballot code for “Name the new coxed four”')).toBe(MEMBERS.length);
    expect(await round()).toMatchObject({ sent: 0 });

    clock.advance(2 * HOUR); // voting opens
    expect(await round()).toMatchObject({ sent: MEMBERS.length });
    expect(countOf('Voting is open: “Name the new coxed four”')).toBe(MEMBERS.length);
    // One member votes; the reminders still go to all, as the site cannot tell.
    const code = codeIn(smtp.received.find((m) => m.envelopeTo.includes('bow@rowing.example'))!.mail.text ?? '')!;
    await castBallot(ctx, { electionId, code, approvals: [0] });
    expect(await round()).toMatchObject({ sent: 0 });

    clock.advance(23 * HOUR); // 25 hours before closing: not yet
    expect(await round()).toMatchObject({ sent: 0 });
    clock.advance(1 * HOUR); // 24 hours before closing
    expect(await round()).toMatchObject({ sent: MEMBERS.length });
    const reminders = smtp.received.filter((m) => m.mail.subject === 'Reminder: “Name the new coxed four” closes soon');
    expect(reminders.map((m) => m.envelopeTo[0]).sort()).toEqual([...MEMBERS].sort());
    for (const m of reminders) {
      expect(m.mail.text).toContain('If you have already voted, ignore this message');
      expect(codeIn(m.mail.text ?? '')).toBeNull();
    }
    clock.advance(23.5 * HOUR); // past the cancelled 1-hour reminder's time
    expect(await round()).toMatchObject({ sent: 0 });

    clock.advance(HOUR); // closed
    await closeAndTally(ctx, { electionId, organiserId, passphrase: FIXTURE_PASSPHRASE });
    expect(await round()).toMatchObject({ sent: 0 });
    await publishResult(ctx, { electionId, organiserId });
    expect(await round()).toMatchObject({ sent: MEMBERS.length });
    const published = smtp.received.filter((m) => m.mail.subject === 'The result of “Name the new coxed four” is published');
    expect(published).toHaveLength(MEMBERS.length);
    expect(published[0]!.mail.text).toContain(`https://vote.rowing.example/results/${electionId}`);
    expect(await round()).toMatchObject({ sent: 0 });

    // In all: one invitation and three notices per member, nothing else.
    expect(smtp.received).toHaveLength(4 * MEMBERS.length);
    const states = await db.knex('mailings').where({ election_id: electionId }).orderBy('kind').select('kind', 'hours_before', 'state');
    expect(states).toEqual(
      expect.arrayContaining([
        { kind: 'closing', hours_before: 1, state: 'cancelled' },
        { kind: 'closing', hours_before: 24, state: 'started' },
      ]),
    );
  });
});
