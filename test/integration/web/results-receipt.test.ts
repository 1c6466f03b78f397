import { describe, expect, it } from 'vitest';
import request from 'supertest';
import { generateReceipt } from '../../../src/custody/index.ts';
import { engines } from '../../helpers/databases.ts';
import { castAll, csrfFrom, formBody, openElectionFixture } from '../../helpers/fixtures.ts';
import { useMemberSuite } from '../../helpers/memberSuite.ts';

/** The receipt check answers only "counted" or "not found". */
describe.each(engines)('receipt check [%s]', (engine) => {
  const s = useMemberSuite(engine);

  async function withCsrf(id: string) {
    const agent = request.agent(s.app);
    const page = await agent.get(`/results/${id}`).expect(200);
    return { agent, csrf: csrfFrom(page.text) };
  }
  /** The page minus the answer and the echoed receipt: what is left must not depend on the receipt. */
  const rest = (html: string) =>
    html
      .replace(/<p class="notice [^"]*receipt-outcome"[^>]*>[^<]*<\/p>/, '')
      .replace(/name="receipt" class="([^"]*)" value="[^"]*"/, 'name="receipt" class="$1"');

  it('says only "counted" or "not found", and no-store', async () => {
    const { f, receipts } = await s.decided([[0], [2]]);
    const { agent, csrf } = await withCsrf(f.id);
    const check = (receipt: string) =>
      agent
        .post(`/results/${f.id}/receipt`)
        .type('form')
        .send(formBody({ _csrf: csrf, receipt }));
    const found = await check(receipts[0]!).expect(200);
    expect(found.headers['cache-control']).toBe('no-store');
    expect(found.text).toContain('This receipt is among the ballots counted.');
    // Case and a hyphen make no difference (Crockford base32 decoding).
    const typedLoosely = `${receipts[1]!.slice(0, 5).toLowerCase()}-${receipts[1]!.slice(5)}`;
    expect((await check(typedLoosely).expect(200)).text).toContain('This receipt is among the ballots counted.');
    let other = generateReceipt(s.ctx.random);
    while (receipts.includes(other)) other = generateReceipt(s.ctx.random);
    const missing = await check(other).expect(200);
    expect(missing.text).toContain('This receipt was not found. Check it for typing mistakes and try again.');
    expect(missing.text).not.toContain('This receipt is among the ballots counted');
    expect(rest(found.text)).toBe(rest(missing.text));
    expect(rest(found.text)).not.toContain(receipts[0]!);
    const malformed = await check('12345').expect(400);
    expect(malformed.text).toContain('That is not a receipt.');
    expect(malformed.text).toContain('aria-invalid="true"');
    expect(malformed.text).toContain('value="12345"');
  });

  it('is refused before publication (409)', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const [receipt] = await castAll(s.ctx, f, [[1]]);
    const agent = request.agent(s.app);
    // The pending page has no receipt form, so take this session's token from a page that has a form.
    const token = csrfFrom((await agent.get(`/vote/${f.id}`).expect(200)).text);
    const res = await agent
      .post(`/results/${f.id}/receipt`)
      .type('form')
      .send(formBody({ _csrf: token, receipt: receipt! }))
      .expect(409);
    expect(res.text).toContain('Receipts can be checked here once the result is published.');
    expect(res.text).not.toContain('This receipt is among the ballots counted');
  });

  it('refuses a missing or invalid CSRF token (403)', async () => {
    const { f, receipts } = await s.decided([[0]]);
    const { agent, csrf } = await withCsrf(f.id);
    await agent
      .post(`/results/${f.id}/receipt`)
      .type('form')
      .send(formBody({ receipt: receipts[0]! }))
      .expect(403);
    await agent
      .post(`/results/${f.id}/receipt`)
      .type('form')
      .send(formBody({ _csrf: `${csrf}x`, receipt: receipts[0]! }))
      .expect(403);
  });
});
