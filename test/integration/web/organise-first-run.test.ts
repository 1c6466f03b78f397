import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testApp } from '../../helpers/app.ts';
import { testClock } from '../../helpers/context.ts';
import { OWASP_PASSWORD_KDF } from '../../../src/accounts/passwords.ts';
import { csrfFrom, organiseContext, PASSWORD } from './organiseSupport.ts';

describe.each(engines)('organiser first run [%s]', (engine) => {
  let db: TestDatabase;
  const clock = testClock('2026-06-01T09:00:00Z');
  let app: ReturnType<typeof testApp>;
  beforeAll(async () => {
    db = await freshDatabase(engine);
    app = testApp(organiseContext(db, clock));
  });
  afterAll(async () => {
    await db.dispose();
  });

  describe('first run', () => {
    it('sign-in redirects to first run while no organiser exists', async () => {
      const res = await request(app).get('/organise/sign-in');
      expect(res.status).toBe(303);
      expect(res.headers.location).toBe('/organise/first-run');
    });

    it('offers the setup form with a CSRF token and no default credentials', async () => {
      const res = await request(app).get('/organise/first-run');
      expect(res.status).toBe(200);
      expect(res.text).toContain('name="_csrf"');
      expect(res.text).toMatch(/<input type="email" id="email" name="email" value=""/);
      expect(res.text).not.toMatch(/type="password"[^>]*value=/);
    });

    it('refuses a missing CSRF token with 403', async () => {
      const agent = request.agent(app);
      await agent.get('/organise/first-run');
      const res = await agent
        .post('/organise/first-run')
        .type('form')
        .send({ email: 'cox@rowing.example', password: PASSWORD, passwordAgain: PASSWORD });
      expect(res.status).toBe(403);
      expect(await db.knex('organisers').count({ n: '*' }).first()).toMatchObject({ n: expect.anything() });
      expect(Number((await db.knex('organisers').count({ n: '*' }).first())!.n)).toBe(0);
    });

    it('refuses an invalid CSRF token with 403', async () => {
      const agent = request.agent(app);
      await agent.get('/organise/first-run');
      const res = await agent
        .post('/organise/first-run')
        .type('form')
        .send({ _csrf: 'forged', email: 'cox@rowing.example', password: PASSWORD, passwordAgain: PASSWORD });
      expect(res.status).toBe(403);
    });

    it.each([
      [{ email: 'not-an-email', password: PASSWORD, passwordAgain: PASSWORD }, 'email', 'Enter an email address like'],
      [{ email: 'cox@rowing.example', password: 'short pass', passwordAgain: 'short pass' }, 'password', 'at least 12 characters'],
      [{ email: 'cox@rowing.example', password: PASSWORD, passwordAgain: PASSWORD + 'x' }, 'passwordAgain', 'not the same'],
    ])('re-renders with a message by the field for %j', async (fields, field, message) => {
      const agent = request.agent(app);
      const token = await csrfFrom(agent, '/organise/first-run');
      const res = await agent
        .post('/organise/first-run')
        .type('form')
        .send({ ...fields, _csrf: token });
      expect(res.status).toBe(400);
      expect(res.text).toContain('role="alert"');
      expect(res.text).toContain(`id="${field}-error"`);
      expect(res.text).toContain(message);
      expect(res.text).toContain(`value="${fields.email}"`); // what they typed is kept
      expect(res.text).not.toContain(fields.password); // passwords are never echoed
    });

    it('creates exactly one first organiser from two simultaneous posts', async () => {
      const a = request.agent(app);
      const b = request.agent(app);
      const [ta, tb] = [await csrfFrom(a, '/organise/first-run'), await csrfFrom(b, '/organise/first-run')];
      const send = (agent: typeof a, token: string, email: string) =>
        agent.post('/organise/first-run').type('form').send({ _csrf: token, email, password: PASSWORD, passwordAgain: PASSWORD });
      const [ra, rb] = await Promise.all([send(a, ta, 'stroke@rowing.example'), send(b, tb, 'bow@rowing.example')]);
      expect([ra.status, rb.status].sort()).toEqual([303, 409]);
      const rows = await db.knex('organisers').select('email', 'password_hash');
      expect(rows).toHaveLength(1);
      // Argon2id in PHC form, never the password itself (OWASP Password Storage Cheat Sheet).
      expect(rows[0].password_hash).toMatch(/^\$argon2id\$v=19\$m=\d+,(t=\d+,p=\d+|p=\d+,t=\d+)\$/);
      expect(rows[0].password_hash).not.toContain(PASSWORD);
      const winner = ra.status === 303 ? ra : rb;
      expect(winner.headers.location).toBe('/organise');
      const loser = ra.status === 303 ? rb : ra;
      expect(loser.text).toContain('already been set up');
    });

    it('is gone once an organiser exists', async () => {
      const res = await request(app).get('/organise/first-run');
      expect(res.status).toBe(303);
      expect(res.headers.location).toBe('/organise/sign-in');
    });
  });

  it('rate-limits sign-in attempts', async () => {
    const fresh = testApp(organiseContext(db, clock));
    const agent = request.agent(fresh);
    const token = await csrfFrom(agent, '/organise/sign-in');
    const statuses: number[] = [];
    for (let i = 0; i < 11; i++) {
      const res = await agent
        .post('/organise/sign-in')
        .type('form')
        .send({ _csrf: token, email: 'nobody@rowing.example', password: 'wrong password here' });
      statuses.push(res.status);
    }
    expect(statuses.slice(0, 10).every((s) => s === 401)).toBe(true);
    expect(statuses[10]).toBe(429);
  });

  it('production hashes at the OWASP minimum for Argon2id', () => {
    // OWASP Password Storage Cheat Sheet: m = 19 MiB, t = 2, p = 1.
    expect(OWASP_PASSWORD_KDF).toEqual({ memoryKiB: 19456, iterations: 2, parallelism: 1 });
  });
});
