import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testApp } from '../../helpers/app.ts';
import { testClock } from '../../helpers/context.ts';
import { findElection } from '../../../src/elections/electionRepo.ts';
import {
  createElectionViaForm,
  csrfFrom,
  electionForm,
  encode,
  makeOrganiser,
  organiseContext,
  PASSPHRASE,
  PASSWORD,
  signedIn,
  tokenIn,
} from './organiseSupport.ts';

/**
 * The idle limit (OWASP ASVS 5.0 §7.3.1, 30 minutes) signs an organiser out in the middle of a long
 * form. The form must survive: sign in again, get it back as typed (except the passphrase), save.
 */
describe.each(engines)('organiser form after the session ran out [%s]', (engine) => {
  let db: TestDatabase;
  const clock = testClock('2026-06-01T09:00:00Z');
  let app: ReturnType<typeof testApp>;
  let email: string;
  beforeAll(async () => {
    db = await freshDatabase(engine);
    const ctx = organiseContext(db, clock);
    app = testApp(ctx);
    email = (await makeOrganiser(ctx, 'captain@rowing.example')).email;
  });
  afterAll(() => db.dispose());

  it('keeps every field but the passphrase through a new sign-in, and saves only when the organiser saves', async () => {
    const agent = await signedIn(app, email);
    const token = await csrfFrom(agent, '/organise/elections/new');
    clock.advance(31 * 60_000); // the organiser took a long time over the options
    const fields = electionForm({ title: 'Name the new boat: second round', optionLabel: ['Heron', 'Kingfisher', 'Otter', 'Grebe'] });
    const expired = await agent
      .post('/organise/elections/new')
      .type('form')
      .send(encode({ ...fields, _csrf: token }))
      .expect(403);
    expect(expired.text).toContain('Sign in again to keep your changes');
    expect(expired.text).toContain('value="Name the new boat: second round"');
    expect(expired.text).toContain('value="Grebe"');
    expect(expired.text).not.toContain(PASSPHRASE);
    expect(
      await db
        .knex('elections')
        .count({ n: '*' })
        .then((r) => Number(r[0]?.n)),
    ).toBe(0);

    // A wrong password keeps the fields too.
    const hidden = [...expired.text.matchAll(/<input type="hidden" name="([^"]+)" value="([^"]*)">/g)]
      .map(
        (m) =>
          [m[1]!, m[2]!.replace(/&#34;/g, '"').replace(/&#39;/g, "'").replace(/&lt;/g, '<').replace(/&gt;/g, '>').replace(/&amp;/g, '&')] as const,
      )
      .filter(([n]) => n !== '_csrf');
    const body = (extra: Record<string, string>, page: string) => {
      const p = new URLSearchParams();
      for (const [n, v] of hidden) p.append(n, v);
      for (const [n, v] of Object.entries({ ...extra, _csrf: tokenIn(page) })) p.append(n, v);
      return p.toString();
    };
    const wrong = await agent
      .post('/organise/sign-in/resume')
      .type('form')
      .send(body({ email, password: 'not the password at all' }, expired.text))
      .expect(401);
    expect(wrong.text).toContain('Sign-in failed');
    expect(wrong.text).toContain('value="Grebe"');

    const back = await agent
      .post('/organise/sign-in/resume')
      .type('form')
      .send(body({ email, password: PASSWORD }, wrong.text))
      .expect(200);
    expect(back.text).toContain('You are signed in again');
    expect(back.text).toContain('action="/organise/elections/new/guidance"');
    expect(
      await db
        .knex('elections')
        .count({ n: '*' })
        .then((r) => Number(r[0]?.n)),
    ).toBe(0);

    const formAgain = await agent
      .post('/organise/elections/new/guidance')
      .type('form')
      .send(body({}, back.text).replace(/(^|&)resumeTo=[^&]*/, ''))
      .expect(200);
    expect(formAgain.text).toContain('value="Name the new boat: second round"');
    expect(formAgain.text).toContain('value="Grebe"');

    const id = await createElectionViaForm(agent, {
      title: 'Name the new boat: second round',
      optionLabel: ['Heron', 'Kingfisher', 'Otter', 'Grebe'],
    });
    expect((await findElection(db.knex, id))?.options.map((o) => o.label)).toEqual(['Heron', 'Kingfisher', 'Otter', 'Grebe']);
  });

  it('a signed-in organiser with a wrong token gets the plain refusal, not a sign-in page', async () => {
    const agent = await signedIn(app, email);
    const res = await agent
      .post('/organise/elections/new')
      .type('form')
      .send(encode({ ...electionForm(), _csrf: 'forged' }))
      .expect(403);
    expect(res.text).not.toContain('Sign in again to keep your changes');
    expect(res.text).toContain('Sign out'); // the page still knows who is signed in
  });

  it('other forms without a token still get the plain refusal', async () => {
    const agent = await signedIn(app, email);
    const res = await agent
      .post('/organise/organisers')
      .type('form')
      .send(encode({ email: 'cox@rowing.example' }))
      .expect(403);
    expect(res.text).not.toContain('Sign in again to keep your changes');
  });
});
