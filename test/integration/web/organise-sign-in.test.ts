import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import crypto from 'node:crypto';
import request from 'supertest';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testApp } from '../../helpers/app.ts';
import { testClock } from '../../helpers/context.ts';
import { csrfFrom, encode, makeOrganiser, organiseContext, PASSWORD, signedIn, tokenIn } from './organiseSupport.ts';

describe.each(engines)('organiser sign-in, sign-out and accounts [%s]', (engine) => {
  let db: TestDatabase;
  const clock = testClock('2026-06-01T09:00:00Z');
  let app: ReturnType<typeof testApp>;
  beforeAll(async () => {
    db = await freshDatabase(engine);
    const ctx = organiseContext(db, clock);
    app = testApp(ctx);
    await makeOrganiser(ctx, 'stroke@rowing.example');
  });
  afterAll(async () => {
    await db.dispose();
  });

  describe('sign-in and sign-out', () => {
    const email = async () => (await db.knex('organisers').first('email')).email as string;

    it('keeps only a safe relative path as next', async () => {
      for (const wanted of ['/organise/elections/new', '/organise/organisers']) {
        const res = await request(app).get(wanted);
        expect(res.status).toBe(303);
        expect(res.headers.location).toBe(`/organise/sign-in?next=${encodeURIComponent(wanted)}`);
      }
      const page = await request(app).get('/organise/sign-in?next=//evil.example/organise');
      expect(page.text).not.toContain('evil.example');
      const page2 = await request(app).get('/organise/sign-in?next=https%3A%2F%2Fevil.example');
      expect(page2.text).not.toContain('name="next"');
    });

    it('rotates the session id at sign-in and honours a safe next', async () => {
      const agent = request.agent(app);
      const form = await agent.get('/organise/sign-in?next=%2Forganise%2Forganisers');
      const before = String(form.headers['set-cookie']).split(';')[0];
      expect(form.text).toContain('name="next" value="/organise/organisers"');
      const res = await agent
        .post('/organise/sign-in')
        .type('form')
        .send({ _csrf: tokenIn(form.text), email: await email(), password: PASSWORD, next: '/organise/organisers' });
      expect(res.status).toBe(303);
      expect(res.headers.location).toBe('/organise/organisers');
      const cookie = String(res.headers['set-cookie']);
      expect(cookie.split(';')[0]).not.toBe(before);
      expect(cookie).toContain('HttpOnly');
      expect(cookie).toContain('SameSite=Lax');
      const page = await agent.get('/organise/organisers');
      expect(page.status).toBe(200);
      expect(page.text).toContain(await email());
    });

    it('ignores an unsafe next on sign-in', async () => {
      const agent = request.agent(app);
      const token = await csrfFrom(agent, '/organise/sign-in');
      const res = await agent
        .post('/organise/sign-in')
        .type('form')
        .send({ _csrf: token, email: await email(), password: PASSWORD, next: '//evil.example/x' });
      expect(res.headers.location).toBe('/organise');
    });

    it('gives one generic message for a wrong password and an unknown email', async () => {
      const messages: string[] = [];
      for (const fields of [
        { email: await email(), password: 'wrong password here' },
        { email: 'nobody@rowing.example', password: PASSWORD },
      ]) {
        const agent = request.agent(app);
        const token = await csrfFrom(agent, '/organise/sign-in');
        const res = await agent
          .post('/organise/sign-in')
          .type('form')
          .send({ ...fields, _csrf: token });
        expect(res.status).toBe(401);
        expect(res.headers['set-cookie'] ?? []).not.toContain('organiserId');
        messages.push(/<h2>Sign-in failed<\/h2>\s*<p>([^<]+)<\/p>/.exec(res.text)![1]!);
        expect(res.text).not.toContain(fields.password);
        expect((await agent.get('/organise')).status).toBe(303);
      }
      expect(messages[0]).toBe(messages[1]);
    });

    it('signs out with POST only, and the old session no longer works', async () => {
      const agent = await signedIn(app, await email());
      expect((await agent.get('/organise')).status).toBe(200);
      expect((await agent.get('/organise/sign-out')).status).toBe(404);
      const token = await csrfFrom(agent, '/organise/organisers');
      const out = await agent.post('/organise/sign-out').type('form').send({ _csrf: token });
      expect(out.status).toBe(303);
      expect(out.headers.location).toBe('/');
      expect((await agent.get('/organise')).status).toBe(303);
    });

    it('sign-out without a CSRF token is refused', async () => {
      const agent = await signedIn(app, await email());
      const res = await agent.post('/organise/sign-out').type('form').send({});
      expect(res.status).toBe(403);
      expect((await agent.get('/organise')).status).toBe(200);
    });

    /** The session row of an agent's cookie: rows are keyed by SHA-256 of the session id. */
    const sessionKey = (setCookie: unknown) => {
      const raw = decodeURIComponent(/veiltally=([^;]+)/.exec(String(setCookie))![1]!);
      const sid = raw.slice(2, raw.lastIndexOf('.')); // express-session signs as "s:<sid>.<signature>"
      return crypto.createHash('sha256').update(sid).digest('hex');
    };

    it('sets a 30-minute idle expiry on the cookie and the stored session', async () => {
      const agent = request.agent(app);
      const token = await csrfFrom(agent, '/organise/sign-in');
      const res = await agent
        .post('/organise/sign-in')
        .type('form')
        .send({ _csrf: token, email: await email(), password: PASSWORD });
      const expires = new Date(/Expires=([^;]+)/.exec(String(res.headers['set-cookie']))![1]!);
      // OWASP ASVS 5.0 §7.3.1: idle timeout; ours is 30 minutes.
      expect(Math.abs(expires.getTime() - Date.now() - 30 * 60_000)).toBeLessThan(60_000);
      const row = await db
        .knex('sessions')
        .where({ sid_hash: sessionKey(res.headers['set-cookie']) })
        .first();
      expect(row).toBeTruthy();
      // The stored expiry follows the injected clock: 29 quiet minutes keep it, 31 end it.
      clock.advance(29 * 60_000);
      expect((await agent.get('/organise')).status).toBe(200);
      clock.advance(31 * 60_000);
      expect((await agent.get('/organise')).status).toBe(303);
    });

    it('records when the session started, and ends it after 12 hours in all', async () => {
      const agent = request.agent(app);
      const token = await csrfFrom(agent, '/organise/sign-in');
      const res = await agent
        .post('/organise/sign-in')
        .type('form')
        .send({ _csrf: token, email: await email(), password: PASSWORD });
      const key = sessionKey(res.headers['set-cookie']);
      const row = await db.knex('sessions').where({ sid_hash: key }).first();
      const data = typeof row.data === 'string' ? JSON.parse(row.data) : row.data;
      expect(data.startedAt).toBe(clock.now().getTime());
      // Stay active (a request every 25 minutes, inside the idle limit) for 11 h 59 min.
      for (let spent = 0; spent < 11 * 60 + 59; spent += 25) {
        clock.advance(Math.min(25, 11 * 60 + 59 - spent) * 60_000);
        expect((await agent.get('/organise')).status).toBe(200);
      }
      clock.advance(2 * 60_000); // ASVS 5.0 §7.3.2: absolute lifetime, ours 12 hours
      expect((await agent.get('/organise')).status).toBe(303);
    });
  });

  describe('adding organisers', () => {
    it('adds an organiser who can then sign in; a repeated email is refused', async () => {
      const first = (await db.knex('organisers').first('email')).email as string;
      const agent = await signedIn(app, first);
      const token = await csrfFrom(agent, '/organise/organisers');
      const res = await agent
        .post('/organise/organisers')
        .type('form')
        .send(encode({ _csrf: token, email: ' Coach@Rowing.example ', password: PASSWORD, passwordAgain: PASSWORD }));
      expect(res.status).toBe(303);
      expect(res.headers.location).toBe('/organise/organisers?added=1');
      const list = await agent.get('/organise/organisers?added=1');
      expect(list.text).toContain('coach@rowing.example');
      expect(list.text).toContain('Organiser added');
      await signedIn(app, 'COACH@rowing.example');

      const token2 = await csrfFrom(agent, '/organise/organisers');
      const dup = await agent
        .post('/organise/organisers')
        .type('form')
        .send({ _csrf: token2, email: 'coach@rowing.example', password: PASSWORD, passwordAgain: PASSWORD });
      expect(dup.status).toBe(409);
      expect(dup.text).toContain('already an organiser with that email');

      const token3 = await csrfFrom(agent, '/organise/organisers');
      const bad = await agent
        .post('/organise/organisers')
        .type('form')
        .send({ _csrf: token3, email: 'cox@rowing.example', password: 'short', passwordAgain: 'short' });
      expect(bad.status).toBe(400);
      expect(bad.text).toContain('id="password-error"');
      expect(await db.knex('audit_events').where({ action: 'organiser-added' }).count({ n: '*' }).first()).toMatchObject({});
    });

    it('needs a session and a CSRF token', async () => {
      const anon = await request(app).get('/organise/organisers');
      expect(anon.status).toBe(303);
      const first = (await db.knex('organisers').first('email')).email as string;
      const agent = await signedIn(app, first);
      const res = await agent
        .post('/organise/organisers')
        .type('form')
        .send({ email: 'x@rowing.example', password: PASSWORD, passwordAgain: PASSWORD });
      expect(res.status).toBe(403);
    });
  });
});
