import { Writable } from 'node:stream';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { castBallot } from '../../../src/elections/castBallot.ts';
import { closeAndTally } from '../../../src/elections/closeAndTally.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { CodeAlreadySpent } from '../../../src/elections/errors.ts';
import { scheduleNotice } from '../../../src/elections/mailings.ts';
import { openElection } from '../../../src/elections/openElection.ts';
import { publishResult } from '../../../src/elections/publishResult.ts';
import { sendDueMail } from '../../../src/elections/sendMail.ts';
import { openDatabase, type Database } from '../../../src/db/knex.ts';
import { startMailLoop, withHousekeepingLock } from '../../../src/housekeeping.ts';
import { createLogger } from '../../../src/log.ts';
import { createMailer } from '../../../src/mail/createMailer.ts';
import { freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { FIXTURE_PASSPHRASE, createOrganiser } from '../../helpers/fixtures.ts';
import { testClock, testContext } from '../../helpers/context.ts';
import { codeIn, rosterElection, rosterWith } from '../../helpers/roster.ts';
import { startSmtp, type LoopbackSmtp } from '../../helpers/smtp.ts';

/**
 * Mail to a roster with two instances on one PostgreSQL schema (each its own knex pool and
 * mailer; the same secrets, clock and key directory), both running the mail loop at once, every
 * 5 ms, against a real SMTP server on loopback (smtp-server; mailparser) that answers slowly, so
 * rounds overlap in time. Only the holder of the mail lock sends: each member gets exactly one
 * invitation, whose code works (and no second code does), and exactly one of each notice (voting
 * opens, 24 hours before closing, result published). PostgreSQL only: on PGlite one process holds
 * the directory (db/dirLock.ts), so a second instance cannot exist there; notices.test.ts and
 * invitations.test.ts cover one instance on both engines.
 */
const pgUrl = process.env.TEST_DATABASE_URL;
const N = 120; // more than two batches of 50
const MEMBERS = Array.from({ length: N }, (_, i) => `member${String(i).padStart(3, '0')}@rowing.example`);
const HOUR = 3600_000;
const TITLE = 'Name the new coxed four';

describe.runIf(pgUrl)('mail to a roster from two instances at once [postgres]', () => {
  let db: TestDatabase;
  let second: Database;
  let smtp: LoopbackSmtp;
  let ctxA: UseCaseContext;
  let ctxB: UseCaseContext;
  const clock = testClock('2026-06-01T09:00:00Z');
  let organiserId: string;
  let electionId: string;
  let loops: { stop(): Promise<void> }[] = [];
  const lines: string[] = [];

  const logger = () => createLogger('info', new Writable({ write: (c, _e, cb) => (lines.push(String(c)), cb()) }));
  const bySubject = (subject: string) => smtp.received.filter((m) => m.mail.subject === subject);
  /** Per member, how many messages with this subject arrived. */
  function perMember(subject: string): Map<string, number> {
    const out = new Map(MEMBERS.map((m) => [m, 0]));
    for (const m of bySubject(subject)) for (const to of m.envelopeTo) out.set(to.toLowerCase(), (out.get(to.toLowerCase()) ?? 0) + 1);
    return out;
  }
  /** Waits until nothing is queued or in hand, then a while longer, so a duplicate would have time to arrive. */
  async function settled(expected: number) {
    await smtp.waitFor(expected, 60_000);
    await expect
      .poll(async () => Number((await db.knex('mail_deliveries').whereIn('state', ['queued', 'sending']).count({ n: '*' }).first())!.n), {
        timeout: 60_000,
        interval: 20,
      })
      .toBe(0);
    await new Promise((r) => setTimeout(r, 400));
    await smtp.waitFor(smtp.received.length);
  }

  beforeAll(async () => {
    db = await freshDatabase('postgres');
    const schema = (await db.knex.raw('select current_schema() as s')).rows[0].s as string;
    second = openDatabase({ engine: 'postgres', url: pgUrl!, searchPath: schema });
    smtp = await startSmtp({ acceptDelayMs: 15 });
    const mailer = () =>
      createMailer({ smtpUrl: smtp.url, from: { name: 'Rowing club vote', address: 'vote@rowing.example' }, outboxDir: '/nonexistent' });
    ctxA = { ...testContext(db, { now: clock.now }), mail: { mailer: mailer(), publicUrl: 'https://vote.rowing.example' } };
    ctxB = { ...ctxA, knex: second.knex, mail: { mailer: mailer(), publicUrl: 'https://vote.rowing.example' } };
    organiserId = await createOrganiser(ctxA, 'captain@rowing.example');
    const rosterId = await rosterWith(
      ctxA,
      organiserId,
      MEMBERS.map((email) => ({ email })),
    );
    electionId = await rosterElection(ctxA, organiserId, rosterId, { open: false, opensInHours: 2, closesInHours: 48 });
    for (const notice of [{ kind: 'opens' }, { kind: 'closing', hoursBefore: 24 }, { kind: 'published' }])
      await scheduleNotice(ctxA, { electionId, organiserId, notice });
  });
  afterAll(async () => {
    await Promise.all(loops.map((l) => l.stop()));
    await ctxA?.mail?.mailer.close();
    await ctxB?.mail?.mailer.close();
    await smtp?.close();
    await second?.close();
    await db?.dispose();
  });

  it('the two instances share one schema and one mail lock', async () => {
    const schemaOf = async (k: Database['knex']) => (await k.raw('select current_schema() as s')).rows[0].s as string;
    expect(await schemaOf(second.knex)).toBe(await schemaOf(db.knex));
    // While one instance holds the mail lock, the other's round does not run.
    let inner: boolean | null = null;
    const outer = await withHousekeepingLock(
      ctxA,
      async () => {
        inner = await withHousekeepingLock(ctxB, async () => undefined, 'mail');
      },
      'mail',
    );
    expect([outer, inner]).toEqual([true, false]);
  });

  it('invitations: each member gets exactly one, and ends with exactly one working code', async () => {
    await openElection(ctxA, { electionId, organiserId, mode: 'schedule' });
    loops = [startMailLoop(ctxA, logger(), 5), startMailLoop(ctxB, logger(), 5)];
    await settled(N);
    const invited = perMember(`Your ballot code for “${TITLE}”`);
    expect([...invited.values()].filter((n) => n !== 1)).toEqual([]);
    expect(smtp.received).toHaveLength(N);
    // No round failed on either instance.
    expect(lines.filter((l) => l.includes('mail round failed'))).toEqual([]);
    expect(Number((await db.knex('pending_codes').count({ n: '*' }).first())!.n)).toBe(0);
    expect(Number((await db.knex('ballot_codes').where({ election_id: electionId }).count({ n: '*' }).first())!.n)).toBe(N);

    clock.advance(2 * HOUR); // voting opens
    await settled(2 * N);
    const codes = bySubject(`Your ballot code for “${TITLE}”`).map((m) => codeIn(m.mail.text ?? '')!);
    expect(new Set(codes).size).toBe(N);
    for (const [i, code] of codes.entries()) {
      const ctx = i % 2 ? ctxA : ctxB;
      await expect(castBallot(ctx, { electionId, code, approvals: [i % 3] })).resolves.toMatchObject({ receipt: expect.any(String) });
      if (i < 3) await expect(castBallot(ctx, { electionId, code, approvals: [0] })).rejects.toBeInstanceOf(CodeAlreadySpent);
    }
  });

  it('notices: each member gets exactly one of each, voting opens, 24 hours before closing, result published', async () => {
    expect([...perMember(`Voting is open: “${TITLE}”`).values()].filter((n) => n !== 1)).toEqual([]);

    clock.advance(24 * HOUR); // 24 hours before closing
    await settled(3 * N);
    expect([...perMember(`Reminder: “${TITLE}” closes soon`).values()].filter((n) => n !== 1)).toEqual([]);

    clock.advance(24 * HOUR + 60_000); // closed
    await closeAndTally(ctxB, { electionId, organiserId, passphrase: FIXTURE_PASSPHRASE });
    await publishResult(ctxA, { electionId, organiserId });
    await settled(4 * N);
    expect([...perMember(`The result of “${TITLE}” is published`).values()].filter((n) => n !== 1)).toEqual([]);
    // In all: one invitation and three notices per member, nothing else; a last round by each sends nothing.
    expect(smtp.received).toHaveLength(4 * N);
    await Promise.all(loops.map((l) => l.stop()));
    loops = [];
    expect([await sendDueMail(ctxA), await sendDueMail(ctxB)]).toEqual([
      { sent: 0, failed: 0, withdrawn: 0 },
      { sent: 0, failed: 0, withdrawn: 0 },
    ]);
  });
});
