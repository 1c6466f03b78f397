import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Agent } from 'supertest';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testApp } from '../../helpers/app.ts';
import { testClock } from '../../helpers/context.ts';
import { codeHash, generateCode, normaliseCode } from '../../../src/custody/index.ts';
import { castBallot } from '../../../src/elections/castBallot.ts';
import type { UseCaseContext } from '../../../src/elections/context.ts';
import { openElection } from '../../../src/elections/openElection.ts';
import { decodeQr } from '../../helpers/qr.ts';
import { csrfFrom, draftElection, makeOrganiser, organiseContext, postForm, signedIn } from './organiseSupport.ts';

// http, so supertest (plain http) gets the ordinary session cookie rather than a Secure one.
const PUBLIC_URL = 'http://vote.tenants.example:8080';

describe.each(engines)('organiser ballot codes [%s]', (engine) => {
  let db: TestDatabase;
  let ctx: UseCaseContext;
  const clock = testClock('2026-06-01T09:00:00Z');
  let app: ReturnType<typeof testApp>;
  let agent: Agent;
  let other: Agent;
  let myEmail: string;
  let id: string;
  const page = () => `/organise/elections/${id}/codes`;
  const issue = (fields: Record<string, string>) => postForm(agent, page(), page(), fields);
  const revoke = (code: string) => postForm(agent, page(), `${page()}/revoke`, { code });
  let csvCodes: string[] = [];

  beforeAll(async () => {
    db = await freshDatabase(engine);
    ctx = organiseContext(db, clock);
    app = testApp(ctx, { PUBLIC_URL });
    const me = await makeOrganiser(ctx, 'secretary@tenants.example');
    myEmail = me.email;
    const them = await makeOrganiser(ctx, 'chair@tenants.example');
    agent = await signedIn(app, me.email);
    other = await signedIn(app, them.email);
    id = await draftElection(ctx, me.id);
  });
  afterAll(async () => {
    await db.dispose();
  });

  it('the codes page shows counts and forms, never a code, and is not stored', async () => {
    const res = await agent.get(page());
    expect(res.status).toBe(200);
    expect(res.headers['cache-control']).toBe('no-store');
    expect(res.text).toContain('0 ballot codes issued');
    expect(res.text).toContain(`${PUBLIC_URL}/vote/${id}`);
    expect(res.text).toContain('Codes are shown only once');
  });

  it('issues codes for a CSV file: a page with the current count, then the download with columns code, ballot_url', async () => {
    const issued = await issue({ count: '3', format: 'csv' });
    expect(issued.status).toBe(200);
    expect(issued.headers['cache-control']).toBe('no-store');
    // The count on the page the organiser stays on already includes the new batch.
    expect(issued.text).toContain('This election now has 3 ballot codes issued');
    expect(issued.text).toContain('3 new codes were issued');
    const batch = /name="batch" value="([A-Za-z0-9_-]{43})"/.exec(issued.text)![1]!;
    const res = await postForm(agent, page(), `${page()}/csv`, { batch, count: '3' });
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('text/csv; charset=utf-8');
    expect(res.headers['content-disposition']).toMatch(/^attachment; filename="?ballot-codes-tenants-repair-fund-\d{8}-\d{4}\.csv"?$/);
    expect(res.headers['cache-control']).toBe('no-store');
    // RFC 4180 §2: CRLF line breaks, optional header line.
    const lines = res.text.split('\r\n');
    expect(lines[0]).toBe('code,ballot_url');
    expect(lines[4]).toBe('');
    const rows = lines.slice(1, 4).map((l) => l.split(','));
    csvCodes = rows.map((r) => r[0]!);
    for (const [code, url] of rows) {
      // 16 Crockford symbols and one check symbol from the same alphabet, grouped 4-4-4-5.
      expect(code).toMatch(/^[0-9A-HJKMNP-TV-Z]{4}(-[0-9A-HJKMNP-TV-Z]{4}){2}-[0-9A-HJKMNP-TV-Z]{5}$/);
      expect(url).toBe(`${PUBLIC_URL}/vote/${id}`);
    }
    // The download issues nothing more, and the same batch downloads the same codes.
    expect((await db.knex('ballot_codes').where({ election_id: id })).length).toBe(3);
    const again = await postForm(agent, page(), `${page()}/csv`, { batch, count: '3' });
    expect(again.text).toBe(res.text.replace(/\r\n$/, '\r\n'));
  });

  it('downloads only batches this election issued, of the size issued', async () => {
    const issued = await issue({ count: '2', format: 'csv' });
    const batch = /name="batch" value="([A-Za-z0-9_-]{43})"/.exec(issued.text)![1]!;
    await db.knex('ballot_codes').where({ election_id: id }).delete(); // forget them, as if never issued
    for (const fields of [
      { batch, count: '2' },
      { batch: 'A'.repeat(43), count: '2' },
      { batch: 'not a batch', count: '2' },
    ]) {
      const res = await postForm(agent, page(), `${page()}/csv`, fields);
      expect(res.status).toBe(404);
      expect(res.headers['content-type']).toMatch(/^text\/html/);
      expect(res.text).toContain('nothing to download');
    }
  });

  it('refuses a batch asked for with more codes than it had', async () => {
    const issued = await issue({ count: '2', format: 'csv' });
    const batch = /name="batch" value="([A-Za-z0-9_-]{43})"/.exec(issued.text)![1]!;
    expect((await postForm(agent, page(), `${page()}/csv`, { batch, count: '1' })).status).toBe(404);
    expect((await postForm(agent, page(), `${page()}/csv`, { batch, count: '2' })).status).toBe(200);
    await db.knex('ballot_codes').where({ election_id: id }).delete();
    const three = await issue({ count: '3', format: 'csv' });
    const b3 = /name="batch" value="([A-Za-z0-9_-]{43})"/.exec(three.text)![1]!;
    const res = await postForm(agent, page(), `${page()}/csv`, { batch: b3, count: '3' });
    csvCodes = res.text
      .split('\r\n')
      .slice(1, 4)
      .map((l) => l.split(',')[0]!);
    // Stored only as keyed hashes: each issued code's hash is present, the code itself nowhere.
    const stored = await db.knex('ballot_codes').where({ election_id: id }).select('code_hash');
    expect(stored).toHaveLength(3);
    const hashes = stored.map((r) => Buffer.from(r.code_hash).toString('hex')).sort();
    const expected = csvCodes.map((c) => codeHash(ctx.secrets.codePepper, id, normaliseCode(c)).toString('hex')).sort();
    expect(hashes).toEqual(expected);
    const dump = JSON.stringify(await db.knex('audit_events').select());
    for (const c of csvCodes) expect(dump).not.toContain(c);
  });

  it('issues codes as printable slips with the title, the ballot URL and one code per slip', async () => {
    const res = await issue({ count: '2', format: 'slips' });
    expect(res.status).toBe(200);
    expect(res.headers['cache-control']).toBe('no-store');
    const slips = res.text.match(/<li class="slip">/g) ?? [];
    expect(slips).toHaveLength(2);
    expect(res.text).toContain('Tenants’ repair fund');
    expect(res.text.match(/class="slip-code code">([0-9A-Z-]{20})</g)).toHaveLength(2);
    expect(res.text).toContain('shown only this once');
    // Printed from a draft, the opening time is a plan: "Open now" would make a slip that said "opens" wrong.
    expect(res.text).toContain('Voting is planned to open');
    expect(res.text).toContain('the organiser may open it sooner');
    expect(res.text).not.toContain('Voting opens');
    // A short address to type, which leads to the ballot page, and a QR code on every slip.
    const short = new RegExp(`${PUBLIC_URL}/v/([0-9a-z]{8})`).exec(res.text)![1]!;
    const followed = await agent.get(`/v/${short.toUpperCase()}`);
    expect(followed.status).toBe(303);
    expect(followed.headers.location).toBe(`/vote/${id}`);
    expect((await agent.get('/v/00000000')).status).toBe(404);
    expect((await agent.get('/v/not-a-ref')).status).toBe(404);
    expect(res.text.match(/<img class="slip-qr" src="data:image\/png;base64,[A-Za-z0-9+/=]+"/g)).toHaveLength(2);
    // Decoded with an independent QR reader (jsQR, over pngjs): the ballot address, never the code.
    const png = /src="data:image\/png;base64,([A-Za-z0-9+/=]+)"/.exec(res.text)![1]!;
    const decoded = decodeQr(Buffer.from(png, 'base64'));
    expect(decoded).toBe(`${PUBLIC_URL}/vote/${id}`);
    for (const code of res.text.match(/(?<=class="slip-code code">)[0-9A-Z-]{20}(?=<)/g)!) {
      expect(decoded).not.toContain(code);
      expect(decoded.toUpperCase()).not.toContain(normaliseCode(code));
    }
  });

  it('issues codes as an on-screen list', async () => {
    const res = await issue({ count: '1', format: 'screen' });
    expect(res.status).toBe(200);
    expect(res.headers['cache-control']).toBe('no-store');
    expect(res.text.match(/<td class="code">[0-9A-Z-]{20}<\/td>/g)).toHaveLength(1);
    const dash = await agent.get(`/organise/elections/${id}`);
    expect(dash.text).toContain('6 ballot codes issued');
    expect(dash.text).toContain('Issued 3 ballot codes');
  });

  it.each([
    [{ count: '0', format: 'csv' }, 'count', 'at least 1 code'],
    [{ count: '100001', format: 'csv' }, 'count', 'at most 100,000'],
    [{ count: 'ten', format: 'csv' }, 'count', 'whole number'],
    [{ count: '5', format: 'pdf' }, 'format', 'Choose how you want the codes'],
  ])('refuses %j and keeps the values', async (fields, key, message) => {
    const before = (await db.knex('ballot_codes').where({ election_id: id })).length;
    const res = await issue(fields);
    expect(res.status).toBe(400);
    expect(res.text).toContain(`href="#${key}"`);
    expect(res.text).toContain(message);
    expect((await db.knex('ballot_codes').where({ election_id: id })).length).toBe(before);
  });

  it('needs a CSRF token to issue or withdraw', async () => {
    expect((await agent.post(page()).type('form').send({ count: '2', format: 'csv' })).status).toBe(403);
    expect((await agent.post(`${page()}/revoke`).type('form').send({ code: csvCodes[0] })).status).toBe(403);
  });

  describe('withdrawing', () => {
    it('withdraws an unused code, pasted in lower case with spaces', async () => {
      const pasted = ` ${csvCodes[0]!.toLowerCase().replace(/-/g, ' ')} `;
      const res = await revoke(pasted);
      expect(res.status).toBe(303);
      expect(res.headers.location).toBe(`${page()}?revoked=1`);
      expect(res.headers.location).not.toContain(csvCodes[0]!);
      const hash = codeHash(ctx.secrets.codePepper, id, normaliseCode(csvCodes[0]!));
      expect((await db.knex('ballot_codes').where({ election_id: id, code_hash: hash }).first()).revoked).toBe(true);
      const after = await agent.get(`${page()}?revoked=1`);
      expect(after.text).toContain('Code withdrawn');
      expect(after.text).toContain('(1 withdrawn)');
    });

    it.each([
      ['hello', 400, 'That is not a ballot code'],
      ['', 400, 'Type or paste the code'],
    ])('refuses %j with %d', async (code, status, message) => {
      const res = await revoke(code);
      expect(res.status).toBe(status);
      expect(res.text).toContain(message);
    });

    it('spots a typing slip through the check symbol', async () => {
      const c = csvCodes[1]!;
      const slip = c.slice(0, 5) + (c[5] === 'A' ? 'B' : 'A') + c.slice(6);
      const res = await revoke(slip);
      expect(res.status).toBe(400);
      expect(res.text).toContain('typing mistake');
      expect(res.text).toContain(`value="${slip}"`);
    });

    it('says when a code was not issued for this election', async () => {
      const res = await revoke(generateCode(ctx.random).display);
      expect(res.status).toBe(404);
      expect(res.text).toContain('not issued for this election');
    });

    it('answers a used code exactly like an unused one, so withdrawing cannot reveal who voted', async () => {
      clock.set('2026-06-10T09:00:00Z');
      agent = await signedIn(app, myEmail); // the jump passed the 12-hour session limit
      other = await signedIn(app, 'chair@tenants.example');
      await openElection(ctx, { electionId: id, organiserId: (await db.knex('elections').where({ id }).first()).owner_id, mode: 'now' });
      await castBallot(ctx, { electionId: id, code: csvCodes[2]!, approvals: [1] });
      const used = await revoke(csvCodes[2]!);
      const unused = await revoke(csvCodes[1]!);
      expect([used.status, used.headers.location]).toEqual([unused.status, unused.headers.location]);
      expect(used.status).toBe(303);
      const page1 = await agent.get(used.headers.location!);
      expect(page1.text).not.toContain('cannot be withdrawn');
      expect(page1.text).toContain('Code withdrawn');
    });
  });

  it('another organiser gets 404', async () => {
    expect((await other.get(page())).status).toBe(404);
    const token = await csrfFrom(other, '/organise');
    expect((await other.post(page()).type('form').send({ _csrf: token, count: '2', format: 'csv' })).status).toBe(404);
    expect((await other.post(`${page()}/revoke`).type('form').send({ _csrf: token, code: csvCodes[1] })).status).toBe(404);
  });

  it('refuses to issue codes once voting has closed', async () => {
    clock.set('2026-06-12T17:00:00Z');
    agent = await signedIn(app, myEmail);
    const res = await issue({ count: '2', format: 'csv' });
    expect(res.status).toBe(409);
    expect(res.text).toContain('before voting closes');
  });
});
