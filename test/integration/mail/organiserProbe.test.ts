import { Writable } from 'node:stream';
import type { Express } from 'express';
import request, { type Agent } from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadConfig } from '../../../src/config.ts';
import { castBallot } from '../../../src/elections/castBallot.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { scheduleNotice } from '../../../src/elections/mailings.ts';
import { sendDueMail } from '../../../src/elections/sendMail.ts';
import { createLogger } from '../../../src/log.ts';
import { createMailer } from '../../../src/mail/createMailer.ts';
import { createApp } from '../../../src/web/app.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testClock, testContext } from '../../helpers/context.ts';
import { csrfFrom } from '../../helpers/csrf.ts';
import { codeIn, rosterElection, rosterWith } from '../../helpers/roster.ts';
import { startSmtp, type LoopbackSmtp } from '../../helpers/smtp.ts';
import { makeOrganiser, signedIn } from '../web/organiseSupport.ts';

/**
 * Issue 19's "done when", from the organiser's side: an organiser holding the roster list tries
 * to learn whether one member voted. Everything they can see (dashboard, election page, mail page,
 * codes page, roster page) is the same before and after that member casts; asking for replacement
 * codes for a member who voted and one who did not gives the same page, a grant for each and a
 * message to each, shown alike on the mail page; notices go to both alike. Both engines.
 */
const PUBLIC = 'https://vote.rowing.example';
const VOTER = 'voter@rowing.example';
const ABSTAINER = 'abstainer@rowing.example';

/** Per-request values (form tokens) removed before pages are compared. */
const stable = (html: string) =>
  html.replace(/name="_csrf" value="[^"]*"/g, 'name="_csrf" value=""').replace(/content="[A-Za-z0-9_-]{20,}"/g, 'content=""');

describe.each(engines)('an organiser probing whether a member voted [%s]', (engine) => {
  let db: TestDatabase;
  let smtp: LoopbackSmtp;
  let ctx: UseCaseContext;
  let app: Express;
  let organiser: Agent;
  let organiserId: string;
  let rosterId: string;
  let electionId: string;
  const clock = testClock('2026-06-01T09:00:00Z');

  const pages = () => [
    '/organise',
    `/organise/elections/${electionId}`,
    `/organise/elections/${electionId}/mail`,
    `/organise/elections/${electionId}/codes`,
    `/organise/rosters/${rosterId}`,
  ];
  async function seen(): Promise<string[]> {
    const out: string[] = [];
    for (const p of pages()) {
      const res = await organiser.get(p);
      out.push(`${p} ${res.status}\n${stable(res.text)}`);
    }
    return out;
  }
  /** The organiser asks for a replacement for an address, as anyone can, from the ballot page. */
  async function askFor(email: string) {
    const agent = request.agent(app);
    const page = await agent.get(`/vote/${electionId}`);
    return agent
      .post(`/vote/${electionId}/replacement`)
      .type('form')
      .send({ _csrf: csrfFrom(page.text), email });
  }

  beforeAll(async () => {
    db = await freshDatabase(engine);
    smtp = await startSmtp();
    const mailer = createMailer({ smtpUrl: smtp.url, from: { name: 'Rowing club vote', address: 'vote@rowing.example' }, outboxDir: '/nonexistent' });
    ctx = { ...testContext(db, { now: clock.now }), mail: { mailer, publicUrl: PUBLIC } };
    app = createApp({
      config: loadConfig({ VEILTALLY_DATA_DIR: '/nonexistent-test-dir' }),
      ctx,
      logger: createLogger('debug', new Writable({ write: (_c, _e, cb) => cb() })),
      sessionSecret: 'test-session-secret-0123456789abcdef',
    });
    organiserId = (await makeOrganiser(ctx, 'captain@rowing.example')).id;
    organiser = await signedIn(app, 'captain@rowing.example');
    rosterId = await rosterWith(ctx, organiserId, [{ email: VOTER }, { email: ABSTAINER }, { email: 'cox@rowing.example' }]);
    electionId = await rosterElection(ctx, organiserId, rosterId, { closesInHours: 48 });
    await scheduleNotice(ctx, { electionId, organiserId, notice: { kind: 'closing', hoursBefore: 24 } });
    await sendDueMail(ctx);
    await smtp.waitFor(3);
  });
  afterAll(async () => {
    await ctx.mail?.mailer.close();
    await smtp.close();
    await db.dispose();
  });

  it('nothing the organiser sees changes when a member casts', async () => {
    const before = await seen();
    expect(before.every((p) => / 200\n/.test(p))).toBe(true);
    expect(before.join('\n')).toContain(VOTER); // the control: the pages do show the roster's addresses
    const code = codeIn(smtp.received.find((m) => m.envelopeTo.includes(VOTER))!.mail.text ?? '')!;
    await castBallot(ctx, { electionId, code, approvals: [0] });
    const after = await seen();
    for (let i = 0; i < before.length; i++) expect(after[i], pages()[i]).toBe(before[i]);
  });

  it('replacements for a member who voted and one who did not: same page, a grant and a message each, shown alike', async () => {
    const a = await askFor(VOTER);
    const b = await askFor(ABSTAINER);
    expect([a.status, b.status]).toEqual([200, 200]);
    expect(stable(a.text)).toBe(stable(b.text));
    expect(Number((await db.knex('replacement_grants').where({ election_id: electionId }).count({ n: '*' }).first())!.n)).toBe(2);
    const before = smtp.received.length;
    expect(await sendDueMail(ctx)).toMatchObject({ sent: 2, failed: 0 });
    await smtp.waitFor(before + 2);
    expect(
      smtp.received
        .slice(before)
        .map((m) => m.envelopeTo[0])
        .sort(),
    ).toEqual([ABSTAINER, VOTER]);
    const mail = (await organiser.get(`/organise/elections/${electionId}/mail`)).text;
    const rowOf = (email: string) => [...mail.matchAll(new RegExp(`${email.replace(/\./g, '\\.')}</td><td>([a-z]+)</td>`, 'g'))].map((m) => m[1]);
    expect(rowOf(VOTER)).toEqual(rowOf(ABSTAINER));
    expect(rowOf(VOTER)).toEqual(['sent', 'sent']); // the invitation and the replacement
  });

  it('the reminder goes to the member who voted as to everyone, and the mail page shows it alike', async () => {
    clock.advance(24 * 3600_000);
    const before = smtp.received.length;
    expect(await sendDueMail(ctx)).toMatchObject({ sent: 3 });
    await smtp.waitFor(before + 3);
    const reminders = smtp.received.slice(before);
    const text = (email: string) => reminders.find((m) => m.envelopeTo.includes(email))!.mail.text!.replaceAll(email, '');
    expect(text(VOTER)).toBe(text(ABSTAINER));
  });
});
