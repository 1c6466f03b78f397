import { Writable } from 'node:stream';
import type { Express } from 'express';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadConfig } from '../../../src/config.ts';
import { castBallot } from '../../../src/elections/castBallot.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { closeAndTally } from '../../../src/elections/closeAndTally.ts';
import { publishResult } from '../../../src/elections/publishResult.ts';
import { sendDueMail } from '../../../src/elections/sendMail.ts';
import { createLogger } from '../../../src/log.ts';
import { createMailer } from '../../../src/mail/createMailer.ts';
import { createApp } from '../../../src/web/app.ts';
import { REPLACEMENT_LIMITS } from '../../../src/web/middleware/limits.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testClock, testContext } from '../../helpers/context.ts';
import { csrfFrom } from '../../helpers/csrf.ts';
import { FIXTURE_PASSPHRASE } from '../../helpers/fixtures.ts';
import { codeIn, rosterElection, rosterWith } from '../../helpers/roster.ts';
import { startSmtp, type LoopbackSmtp } from '../../helpers/smtp.ts';
import { makeOrganiser } from '../web/organiseSupport.ts';

/**
 * Replacement codes, against a real SMTP server on loopback (smtp-server, read back with
 * mailparser), both engines: the same answer for a roster address and any other; a replacement
 * works and the lost code still does; one replacement per member; the statement, from the public's
 * side (result page and statement JSON), gives the number sent and the wider protection.
 */
const PUBLIC = 'https://vote.rowing.example';
const MEMBERS = [
  { email: 'bow@rowing.example', name: 'Bow' },
  { email: 'stroke@rowing.example', name: 'Stroke' },
  { email: 'cox@rowing.example', name: 'Cox' },
];

/** Per-request values removed before two answers are compared (none expected on this page; a nonce cookie goes in headers). */
const stable = (html: string) => html.replace(/name="_csrf" value="[^"]*"/g, 'name="_csrf" value=""');

describe.each(engines)('replacement codes [%s]', (engine) => {
  let db: TestDatabase;
  let smtp: LoopbackSmtp;
  let ctx: UseCaseContext;
  let app: Express;
  const clock = testClock('2026-06-01T09:00:00Z');
  let organiserId: string;
  let electionId: string;
  const invited = new Map<string, string>();

  async function ask(email: string, ip = '10.0.0.1') {
    const agent = request.agent(app);
    const page = await agent.get(`/vote/${electionId}`).set('X-Forwarded-For', ip);
    expect(page.status).toBe(200);
    return agent
      .post(`/vote/${electionId}/replacement`)
      .set('X-Forwarded-For', ip)
      .type('form')
      .send({ _csrf: csrfFrom(page.text), email });
  }

  beforeAll(async () => {
    db = await freshDatabase(engine);
    smtp = await startSmtp();
    const mailer = createMailer({ smtpUrl: smtp.url, from: { name: 'Rowing club vote', address: 'vote@rowing.example' }, outboxDir: '/nonexistent' });
    ctx = { ...testContext(db, { now: clock.now }), mail: { mailer, publicUrl: PUBLIC } };
    app = createApp({
      config: loadConfig({ VEILTALLY_DATA_DIR: '/nonexistent-test-dir', TRUST_PROXY: 'loopback' }),
      ctx,
      logger: createLogger('debug', new Writable({ write: (_c, _e, cb) => cb() })),
      sessionSecret: 'test-session-secret-0123456789abcdef',
    });
    organiserId = (await makeOrganiser(ctx, 'captain@rowing.example')).id;
    const rosterId = await rosterWith(ctx, organiserId, MEMBERS);
    electionId = await rosterElection(ctx, organiserId, rosterId);
    await sendDueMail(ctx);
    await smtp.waitFor(MEMBERS.length);
    for (const r of smtp.received) invited.set(r.envelopeTo[0]!.toLowerCase(), codeIn(r.mail.text ?? '')!);
  });
  afterAll(async () => {
    await ctx.mail?.mailer.close();
    await smtp.close();
    await db.dispose();
  });

  it('the ballot page of a roster election has the form', async () => {
    const page = await request(app).get(`/vote/${electionId}`);
    expect(page.text).toContain('Lost your code?');
    expect(page.text).toContain(`action="/vote/${electionId}/replacement"`);
    expect(page.text).toContain('The lost code is not switched off');
  });

  it('answers a roster address and an address not on it with the same page and status', async () => {
    const member = await ask('Bow@Rowing.example');
    const stranger = await ask('nobody@elsewhere.example');
    expect(member.status).toBe(200);
    expect(stranger.status).toBe(200);
    expect(stable(member.text)).toBe(stable(stranger.text));
    expect(member.text).toContain('Check your email');
    expect(member.text).not.toContain('bow@rowing.example');
    // A member asking again (capped) gets the same page too.
    const again = await ask('bow@rowing.example');
    expect(stable(again.text)).toBe(stable(member.text));
  });

  it('mails one replacement, which works, while the lost code still works; the cap holds', async () => {
    const before = smtp.received.length;
    const round = await sendDueMail(ctx);
    expect(round).toMatchObject({ sent: 1, failed: 0 });
    await smtp.waitFor(before + 1);
    const mail = smtp.received.slice(before);
    expect(mail).toHaveLength(1);
    expect(mail[0]!.envelopeTo).toEqual(['bow@rowing.example']);
    expect(mail[0]!.mail.subject).toBe('A replacement ballot code for “Name the new coxed four”');
    const text = mail[0]!.mail.text ?? '';
    expect(text).toContain('Your first code still works too');
    const fresh = codeIn(text)!;
    expect(fresh).not.toBeNull();
    expect(fresh).not.toBe(invited.get('bow@rowing.example'));
    await expect(castBallot(ctx, { electionId, code: fresh, approvals: [0] })).resolves.toMatchObject({ receipt: expect.any(String) });
    await expect(castBallot(ctx, { electionId, code: invited.get('bow@rowing.example')!, approvals: [1] })).resolves.toMatchObject({
      receipt: expect.any(String),
    });
    // The second request for the same member sent nothing, and a third sends nothing either.
    await ask('bow@rowing.example');
    expect(await sendDueMail(ctx)).toMatchObject({ sent: 0 });
    expect(
      await db
        .knex('replacement_grants')
        .where({ election_id: electionId })
        .count({ n: '*' })
        .first()
        .then((r) => Number(r!.n)),
    ).toBe(1);
  });

  it('past the per-client limit the answer is 429 with the usual page', async () => {
    const ip = '10.0.0.99';
    for (let i = 0; i < REPLACEMENT_LIMITS.perClient; i++) expect((await ask(`x${i}@elsewhere.example`, ip)).status).toBe(200);
    const over = await ask('cox@rowing.example', ip);
    expect(over.status).toBe(429);
    expect(over.text).toContain('Too many requests for a replacement code');
    expect(over.headers['retry-after']).toBeDefined();
  });

  it('publishes the number of replacements; the statement’s privacy and accuracy sentences change (public side)', async () => {
    clock.set(new Date(Date.parse('2026-06-08T10:00:00Z')));
    await closeAndTally(ctx, { electionId, organiserId, passphrase: FIXTURE_PASSPHRASE });
    await publishResult(ctx, { electionId, organiserId });
    const json = await request(app).get(`/results/${electionId}/statement.json`);
    expect(json.status).toBe(200);
    expect(json.body.statement.ledger.replacements).toBe(1);
    const page = await request(app).get(`/results/${electionId}`);
    expect(page.status).toBe(200);
    expect(page.text).toContain('Replacement codes sent for lost codes: <strong>1</strong>');
    expect(page.text).toContain('1 replacement code was sent to members who asked for one');
    // ε = 1, replace-one: a member with two codes is protected at 2ε, e² ≈ 7.39 rounded up.
    expect(page.text).toContain('by 7.39 (ε = 2');
    expect(page.text).toContain('could be second ballots from members holding a replacement code');
    // The grants (member hashes) are gone with the draw.
    expect(
      await db
        .knex('replacement_grants')
        .count({ n: '*' })
        .first()
        .then((r) => Number(r!.n)),
    ).toBe(0);
  });
});
