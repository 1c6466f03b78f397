import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { Writable } from 'node:stream';
import type { Express } from 'express';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadConfig } from '../../../src/config.ts';
import { codeBytes, normaliseCode } from '../../../src/custody/index.ts';
import { openDatabase } from '../../../src/db/knex.ts';
import { migrateLatest } from '../../../src/db/migrate.ts';
import { castBallot } from '../../../src/elections/castBallot.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { CodeAlreadySpent } from '../../../src/elections/errors.ts';
import { resendFailed } from '../../../src/elections/mailings.ts';
import { sendDueMail } from '../../../src/elections/sendMail.ts';
import { startMailLoop } from '../../../src/housekeeping.ts';
import { createLogger } from '../../../src/log.ts';
import { createMailer } from '../../../src/mail/createMailer.ts';
import { createApp } from '../../../src/web/app.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testClock, testContext } from '../../helpers/context.ts';
import { codeIn, rosterElection, rosterWith } from '../../helpers/roster.ts';
import { startSmtp, type LoopbackSmtp } from '../../helpers/smtp.ts';
import { allRowsAsText } from '../custody/_scan.ts';
import { makeOrganiser, signedIn } from '../web/organiseSupport.ts';

/**
 * Invitations to a roster, end to end against a real SMTP server on loopback (smtp-server,
 * read back with mailparser): every address gets exactly one message with one working code and
 * the ballot link; a refused address is shown as failed with the server's answer and, sent again,
 * gets a fresh code; no mailed code is found in any row (and a pg_dump, or the embedded
 * directory's files), in the debug log, or on any organiser page.
 */
const PUBLIC = 'https://vote.rowing.example';
const MEMBERS = [
  { email: 'bow@rowing.example', name: 'Bow' },
  { email: 'Two@Rowing.example', name: 'Doe, Jane <jane@elsewhere.example>' },
  { email: 'three@rowing.example', name: '' },
  { email: 'four@rowing.example', name: '"Quoted" =?utf-8?q?Bcc:_eve@elsewhere.example?=' },
  { email: 'five@rowing.example', name: 'Zoë Ærø' },
  { email: 'six@rowing.example', name: 'Six' },
  { email: 'seven@rowing.example', name: 'Seven' },
  { email: 'stroke@rowing.example', name: 'Stroke' },
  { email: 'cox@rowing.example', name: 'Cox' },
  { email: 'gone@rowing.example', name: 'Gone' },
  { email: 'coach@rowing.example', name: 'Coach' },
];

/** Every form a code could take in text: as mailed, canonical, lower case, and hex and base64 of its bytes. */
function forms(code: string): string[] {
  const canonical = normaliseCode(code);
  const bytes = codeBytes(canonical);
  return [
    code,
    canonical,
    canonical.toLowerCase(),
    code.toLowerCase(),
    bytes.toString('hex'),
    bytes.toString('base64').replace(/=+$/, ''),
    bytes.toString('base64url'),
  ];
}

function filesUnder(dir: string): string[] {
  return fs
    .readdirSync(dir, { withFileTypes: true })
    .flatMap((d) => (d.isDirectory() ? filesUnder(path.join(dir, d.name)) : [path.join(dir, d.name)]));
}

describe.each(engines)('invitations by email [%s]', (engine) => {
  let db: TestDatabase;
  let dataDir: string | null = null;
  let closed = false;
  let smtp: LoopbackSmtp;
  let ctx: UseCaseContext;
  let app: Express;
  const refused = new Set(['gone@rowing.example']);
  const log: string[] = [];
  const clock = testClock('2026-06-01T09:00:00Z');
  let organiserId: string;
  let electionId: string;
  const codes = new Map<string, string>();

  beforeAll(async () => {
    if (engine === 'pglite') {
      // A directory, not memory, so the files PGlite writes can be scanned too.
      dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'vt-invite-'));
      const opened = openDatabase({ engine: 'pglite', dataDir });
      await migrateLatest(opened.knex);
      db = { ...opened, dispose: () => opened.close() };
    } else db = await freshDatabase(engine);
    smtp = await startSmtp({ refuse: (a) => (refused.has(a) ? '5.1.1 <mailbox unavailable>' : null) });
    const mailer = createMailer({ smtpUrl: smtp.url, from: { name: 'Rowing club vote', address: 'vote@rowing.example' }, outboxDir: '/nonexistent' });
    ctx = { ...testContext(db, { now: clock.now }), mail: { mailer, publicUrl: PUBLIC } };
    const logger = createLogger('debug', new Writable({ write: (c, _e, cb) => (log.push(String(c)), cb()) }));
    app = createApp({
      config: loadConfig({ VEILTALLY_DATA_DIR: '/nonexistent-test-dir' }),
      ctx,
      logger,
      sessionSecret: 'test-session-secret-0123456789abcdef',
    });
    organiserId = (await makeOrganiser(ctx, 'captain@rowing.example')).id;
    const rosterId = await rosterWith(ctx, organiserId, MEMBERS);
    electionId = await rosterElection(ctx, organiserId, rosterId);
  });
  afterAll(async () => {
    await ctx.mail?.mailer.close();
    await smtp.close();
    if (!closed) await db.dispose();
    if (dataDir) fs.rmSync(dataDir, { recursive: true, force: true });
  });

  it('queues one invitation per member at opening and sends nothing readable before the sender runs', async () => {
    expect(await db.knex('mail_deliveries').count({ n: '*' }).first()).toMatchObject({ n: expect.anything() });
    const states = await db.knex('mail_deliveries').pluck('state');
    expect(states).toEqual(Array(MEMBERS.length).fill('queued'));
    expect(
      await db
        .knex('ballot_codes')
        .where({ election_id: electionId })
        .count({ n: '*' })
        .first()
        .then((r) => Number(r!.n)),
    ).toBe(0);
  });

  it('mails every accepted address exactly one message with its own code and the ballot link; the refused one fails with the answer', async () => {
    // The background loop does the sending, as in the server (PGlite: no lock; PostgreSQL: the mail lock).
    const loop = startMailLoop(ctx, createLogger('debug', new Writable({ write: (c, _e, cb) => (log.push(String(c)), cb()) })), 50);
    await smtp.waitFor(MEMBERS.length - 1);
    for (let i = 0; i < 200 && (await db.knex('mail_deliveries').where({ state: 'queued' }).first()); i++)
      await new Promise((r) => setTimeout(r, 25));
    await new Promise((r) => setTimeout(r, 100));
    loop.stop();
    expect(smtp.received).toHaveLength(MEMBERS.length - 1);
    for (const m of MEMBERS.filter((x) => !refused.has(x.email))) {
      const mine = smtp.received.filter((r) => r.envelopeTo.some((a) => a.toLowerCase() === m.email.toLowerCase()));
      expect(mine, m.email).toHaveLength(1);
      const got = mine[0]!;
      expect(got.envelopeTo).toHaveLength(1);
      // One recipient in To, whatever the name held (nodemailer encodes it; RFC 5322 §3.4, RFC 2047).
      const to = got.mail.to as { value: { address: string; name: string }[] };
      expect(to.value.map((v) => v.address.toLowerCase())).toEqual([m.email.toLowerCase()]);
      expect(got.mail.headers.has('bcc')).toBe(false);
      expect(got.mail.subject).toBe('Your ballot code for “Name the new coxed four”');
      const text = got.mail.text ?? '';
      expect(text).toContain(`${PUBLIC}/vote/${electionId}`);
      const code = codeIn(text);
      expect(code, text).not.toBeNull();
      codes.set(m.email, code!);
    }
    expect(new Set(codes.values()).size).toBe(MEMBERS.length - 1);
    const failed = await db
      .knex('mail_deliveries as d')
      .join('roster_members as m', 'm.id', 'd.member_id')
      .where('d.state', 'failed')
      .select('m.email', 'd.answer');
    expect(failed).toEqual([{ email: 'gone@rowing.example', answer: expect.stringContaining('mailbox unavailable') }]);
    expect(
      await db
        .knex('pending_codes')
        .count({ n: '*' })
        .first()
        .then((r) => Number(r!.n)),
    ).toBe(0);
  });

  it('the mail page shows sent and failed with the server’s answer, and never a code', async () => {
    const agent = await signedIn(app, 'captain@rowing.example');
    const page = await agent.get(`/organise/elections/${electionId}/mail`);
    expect(page.status).toBe(200);
    expect(page.text).toContain(`Sent ${MEMBERS.length - 1} of ${MEMBERS.length}`);
    expect(page.text).toMatch(/gone@rowing\.example<\/td><td>failed<\/td><td>[^<]*mailbox unavailable/);
    expect(page.text).toContain('Send again to the 1 failed address');
    expect(page.text).toContain('127.0.0.1');
  });

  it('sent again, the failed address gets one fresh code; then every member holds exactly one working code', async () => {
    refused.clear();
    await resendFailed(ctx, { electionId, organiserId });
    const r = await sendDueMail(ctx);
    expect(r).toMatchObject({ sent: 1, failed: 0 });
    await smtp.waitFor(MEMBERS.length);
    const last = smtp.received.filter((x) => x.envelopeTo.includes('gone@rowing.example'));
    expect(last).toHaveLength(1);
    codes.set('gone@rowing.example', codeIn(last[0]!.mail.text ?? '')!);
    // Nothing is left to send: a second round sends nothing.
    expect(await sendDueMail(ctx)).toMatchObject({ sent: 0, failed: 0 });
    expect(
      await db
        .knex('ballot_codes')
        .where({ election_id: electionId })
        .count({ n: '*' })
        .first()
        .then((x) => Number(x!.n)),
    ).toBe(MEMBERS.length);
    for (const [email, code] of codes) {
      await expect(castBallot(ctx, { electionId, code, approvals: [0] }), email).resolves.toMatchObject({ receipt: expect.any(String) });
      await expect(castBallot(ctx, { electionId, code, approvals: [1] })).rejects.toBeInstanceOf(CodeAlreadySpent);
    }
  });

  it('no mailed code is in any row, the debug log, or an organiser page', async () => {
    expect(codes.size).toBe(MEMBERS.length);
    const agent = await signedIn(app, 'captain@rowing.example');
    const rosterId = (await db.knex('elections').where({ id: electionId }).first('roster_id')).roster_id as string;
    const pages: string[] = [];
    for (const p of [
      '/organise',
      `/organise/elections/${electionId}`,
      `/organise/elections/${electionId}/mail`,
      `/organise/elections/${electionId}/codes`,
      `/organise/elections/${electionId}/sharing`,
      `/organise/rosters`,
      `/organise/rosters/${rosterId}`,
    ]) {
      const res = await agent.get(p);
      pages.push(`${p}: ${res.status} ${res.text}`);
    }
    const rows = await allRowsAsText(db);
    expect(rows).toContain('mail_deliveries: ('); // the scan sees the mail tables
    expect(log.join('')).toContain('mail round'); // and the log saw the sender at work
    const haystacks: [string, string][] = [
      ['rows', rows.toLowerCase()],
      ['log', log.join('').toLowerCase()],
      ['pages', pages.join('\n').toLowerCase()],
    ];
    if (engine === 'postgres') {
      const schema = (await db.knex.raw('select current_schema() as s')).rows[0].s as string;
      const dump = execFileSync('pg_dump', ['--data-only', '-n', schema, process.env.TEST_DATABASE_URL!], { maxBuffer: 256 * 1024 * 1024 });
      expect(dump.toString('utf8')).toContain('mail_deliveries');
      haystacks.push(['pg_dump', dump.toString('utf8').toLowerCase()]);
    }
    // Control: the same search finds every code in the mail as it was sent.
    const mailed = smtp.received
      .map((r) => r.raw)
      .join('\n')
      .toLowerCase();
    for (const code of codes.values()) expect(mailed.includes(code.toLowerCase())).toBe(true);
    for (const [where, text] of haystacks)
      for (const code of codes.values()) for (const f of forms(code)) expect(text.includes(f.toLowerCase()), `${where} holds ${f}`).toBe(false);
    if (dataDir) {
      await db.knex.raw('CHECKPOINT');
      await db.close();
      const files = filesUnder(dataDir);
      expect(files.length).toBeGreaterThan(10);
      for (const file of files) {
        const bytes = fs.readFileSync(file);
        for (const code of codes.values()) {
          const canonical = normaliseCode(code);
          for (const needle of [Buffer.from(code), Buffer.from(canonical), codeBytes(canonical)])
            expect(bytes.includes(needle), `${file} holds a code`).toBe(false);
        }
      }
      closed = true;
    }
  });
});
