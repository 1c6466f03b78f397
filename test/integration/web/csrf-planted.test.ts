import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import type { Express } from 'express';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testApp } from '../../helpers/app.ts';
import { testClock } from '../../helpers/context.ts';
import { cookieHeaderFrom, csrfFrom } from '../../helpers/csrf.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { draftElection, encode, makeOrganiser, organiseContext, PASSWORD } from './organiseSupport.ts';

/**
 * CSRF by an attacker who can plant a cookie in the victim's browser (a sibling subdomain, or
 * anyone on the path of a plain-http site). The attacker fetches a form for themselves, keeps its
 * token, and plants the nonce cookie that token was made for; the victim's browser then sends the
 * attacker's form with the victim's own cookies plus the planted one. Every request here goes over
 * HTTP to the real app (supertest listens on a loopback port); addresses come through
 * X-Forwarded-For from a trusted loopback proxy, so attacker and victim are different clients.
 */
const PUBLIC_URL = 'http://vote.rowing.example:8080';
const ATTACKER = '203.0.113.7'; // RFC 5737 documentation addresses
const VICTIM = '198.51.100.20';

describe.each(engines)('CSRF with a planted cookie [%s]', (engine) => {
  let db: TestDatabase;
  let ctx: UseCaseContext;
  let app: Express;
  let victimEmail: string;
  let attackerEmail: string;
  let electionId: string;

  /** A browser: a cookie jar keyed by name, an address, and no Origin unless asked (an old browser, or a planted form). */
  class Browser {
    readonly jar = new Map<string, string>();
    constructor(readonly address: string) {}
    cookie(): string {
      return [...this.jar].map(([k, v]) => `${k}=${v}`).join('; ');
    }
    keep(setCookie: unknown): void {
      for (const pair of cookieHeaderFrom(setCookie).split('; ').filter(Boolean)) {
        const i = pair.indexOf('=');
        this.jar.set(pair.slice(0, i), pair.slice(i + 1));
      }
    }
    async get(path: string) {
      const res = await request(app).get(path).set('X-Forwarded-For', this.address).set('Cookie', this.cookie());
      this.keep(res.headers['set-cookie']);
      return res;
    }
    async post(path: string, fields: Record<string, string>, headers: Record<string, string> = {}) {
      const res = await request(app)
        .post(path)
        .set('X-Forwarded-For', this.address)
        .set('Cookie', this.cookie())
        .set(headers)
        .type('form')
        .send(encode(fields));
      this.keep(res.headers['set-cookie']);
      return res;
    }
    async signIn(email: string) {
      const page = await this.get('/organise/sign-in');
      const res = await this.post('/organise/sign-in', { _csrf: csrfFrom(page.text), email, password: PASSWORD, next: '' });
      expect(res.status, res.text.slice(0, 300)).toBe(303);
    }
  }

  const codesIssued = async () => Number((await db.knex('ballot_codes').where({ election_id: electionId }).count({ n: '*' }))[0]!.n);
  /** The page an organiser lands on, and whose it is: 303 to sign-in when nobody is signed in. */
  const whoIsSignedIn = async (b: Browser) => {
    const res = await b.get('/organise/account');
    return res.status === 200 ? res.text : `status ${res.status}`;
  };

  beforeAll(async () => {
    db = await freshDatabase(engine);
    ctx = organiseContext(db, testClock('2026-06-01T09:00:00Z'));
    app = testApp(ctx, { PUBLIC_URL, TRUST_PROXY: 'loopback' });
    const victim = await makeOrganiser(ctx, 'secretary@rowing.example');
    victimEmail = victim.email;
    attackerEmail = (await makeOrganiser(ctx, 'mallory@rowing.example')).email;
    electionId = await draftElection(ctx, victim.id);
  });
  afterAll(async () => {
    await db.dispose();
  });

  /** What the attacker fetches for themselves: a form's token and the nonce cookie it was made for. */
  async function attackerForm(path: string): Promise<{ token: string; nonce: string }> {
    const attacker = new Browser(ATTACKER);
    const page = await attacker.get(path);
    const nonce = attacker.jar.get('veiltally-csrf');
    if (!nonce) throw new Error(`${path} set no nonce cookie`);
    return { token: csrfFrom(page.text), nonce };
  }

  it('a forged post on an organiser route, with the nonce cookie planted, is refused and issues no code', async () => {
    const victim = new Browser(VICTIM);
    await victim.signIn(victimEmail);
    expect(await codesIssued()).toBe(0);
    // Tokens from a member page (the home page's code box) and from the sign-in page.
    for (const path of ['/', '/organise/sign-in']) {
      const { token, nonce } = await attackerForm(path);
      victim.jar.set('veiltally-csrf', nonce);
      const res = await victim.post(`/organise/elections/${electionId}/codes`, { _csrf: token, count: '5', format: 'screen' });
      expect(res.status, `token from ${path}`).toBe(403);
      expect(res.text).toContain('not sent by this site');
      expect(await codesIssued()).toBe(0);
    }
    // The victim is still signed in, and their own form still works.
    const page = await victim.get(`/organise/elections/${electionId}/codes`);
    expect(page.status).toBe(200);
    const ok = await victim.post(`/organise/elections/${electionId}/codes`, { _csrf: csrfFrom(page.text), count: '2', format: 'screen' });
    expect(ok.status).toBe(200);
    expect(await codesIssued()).toBe(2);
  });

  it('login CSRF: a planted nonce and the attacker’s token do not sign the victim in to the attacker’s account', async () => {
    for (const path of ['/organise/sign-in', '/']) {
      const { token, nonce } = await attackerForm(path);
      const victim = new Browser(VICTIM);
      victim.jar.set('veiltally-csrf', nonce);
      const res = await victim.post('/organise/sign-in', { _csrf: token, email: attackerEmail, password: PASSWORD, next: '' });
      expect(res.status, `token from ${path}`).toBe(403);
      expect(victim.jar.has('veiltally'), 'no session cookie was set').toBe(false);
      expect(await whoIsSignedIn(victim)).toBe('status 303');
    }
    // The same holds for the other forms that sign a browser in: the sign-in that keeps a form.
    const { token, nonce } = await attackerForm('/organise/sign-in');
    const victim = new Browser(VICTIM);
    victim.jar.set('veiltally-csrf', nonce);
    const resume = await victim.post('/organise/sign-in/resume', {
      _csrf: token,
      email: attackerEmail,
      password: PASSWORD,
      resumeTo: '/organise/elections/new/guidance',
    });
    expect(resume.status).toBe(403);
    expect(await whoIsSignedIn(victim)).toBe('status 303');
  });

  it('a post with Origin: null is refused even with a valid token, signed in or not', async () => {
    const victim = new Browser(VICTIM);
    await victim.signIn(victimEmail);
    const before = await codesIssued();
    const page = await victim.get(`/organise/elections/${electionId}/codes`);
    const res = await victim.post(
      `/organise/elections/${electionId}/codes`,
      { _csrf: csrfFrom(page.text), count: '3', format: 'screen' },
      { Origin: 'null' },
    );
    expect(res.status).toBe(403);
    expect(res.text).toContain('no address of its own');
    expect(await codesIssued()).toBe(before);

    const stranger = new Browser(VICTIM);
    const signInPage = await stranger.get('/organise/sign-in');
    const signIn = await stranger.post(
      '/organise/sign-in',
      { _csrf: csrfFrom(signInPage.text), email: attackerEmail, password: PASSWORD, next: '' },
      { Origin: 'null' },
    );
    expect(signIn.status).toBe(403);
    expect(await whoIsSignedIn(stranger)).toBe('status 303');
    const home = await stranger.get('/');
    const box = await stranger.post('/ballot', { _csrf: csrfFrom(home.text), code: 'ABCD-EFGH-JKMN-PQRS-T' }, { Origin: 'null' });
    expect(box.status).toBe(403);
  });

  it('the normal flows still work: sign-in with the site’s own Origin, a member form, sign-out', async () => {
    const origin = { Origin: PUBLIC_URL, 'Sec-Fetch-Site': 'same-origin' };
    const organiser = new Browser(VICTIM);
    const page = await organiser.get('/organise/sign-in');
    const signIn = await organiser.post(
      '/organise/sign-in',
      { _csrf: csrfFrom(page.text), email: victimEmail, password: PASSWORD, next: '' },
      origin,
    );
    expect(signIn.status).toBe(303);
    expect(await whoIsSignedIn(organiser)).toContain(victimEmail);
    const dashboard = await organiser.get('/organise');
    const out = await organiser.post('/organise/sign-out', { _csrf: csrfFrom(dashboard.text) }, origin);
    expect(out.status).toBe(303);
    expect(await whoIsSignedIn(organiser)).toBe('status 303');

    // A member's code box: a wrong code gets the ordinary answer, not a CSRF refusal.
    const member = new Browser('192.0.2.44');
    const home = await member.get('/');
    const box = await member.post('/ballot', { _csrf: csrfFrom(home.text), code: 'ABCD-EFGH-JKMN-PQRS-T' }, origin);
    expect(box.status).not.toBe(403);
    expect(box.status).toBeLessThan(500);
  });

  it('a sign-in form fetched from one address and sent from another is refused: the token names its client', async () => {
    const b = new Browser(VICTIM);
    const page = await b.get('/organise/sign-in');
    const token = csrfFrom(page.text);
    const moved = new Browser('192.0.2.99');
    for (const [k, v] of b.jar) moved.jar.set(k, v);
    const res = await moved.post('/organise/sign-in', { _csrf: token, email: victimEmail, password: PASSWORD, next: '' });
    expect(res.status).toBe(403);
    // Reloading the page from the new address gives a form that works there.
    await moved.signIn(victimEmail);
    expect(await whoIsSignedIn(moved)).toContain(victimEmail);
  });
});
