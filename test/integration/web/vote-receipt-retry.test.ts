import { describe, expect, it } from 'vitest';
import request from 'supertest';
import { checkReceipt } from '../../../src/elections/checkReceipt.ts';
import { closeAndTally } from '../../../src/elections/closeAndTally.ts';
import { countTurnout } from '../../../src/elections/turnout.ts';
import { engines } from '../../helpers/databases.ts';
import { FIXTURE_PASSPHRASE, openElectionFixture, type ElectionFixture } from '../../helpers/fixtures.ts';
import { useMemberSuite, type Agent } from '../../helpers/memberSuite.ts';
import { castFrom, hiddenFields, toConfirm } from '../../helpers/memberWalk.ts';

const RECEIPT = /<p class="receipt">([0-9A-Z]{5}-[0-9A-Z]{5})<\/p>/;

/**
 * A lost answer must not strand a member: the same cast sent again returns the same receipt (the
 * one-time token lives in this browser's step cookie). Anyone without that cookie learns only what
 * the cast step tells anyone ("already used"). After casting, the browser is redirected, and only
 * it can show the receipt.
 */
describe.each(engines)('a member can always get their receipt [%s]', (engine) => {
  const s = useMemberSuite(engine);
  const { begin, post } = s;

  /** A member at the read-back page, with the cast form and the cookies exactly as the browser holds them. */
  async function confirmed(f: ElectionFixture, code: string, approve: number[]) {
    const m = s.browser();
    const page = await toConfirm(m, f.id, code, approve);
    return { ...m, page, fields: Object.fromEntries(hiddenFields(page.text, '/cast').fields) as Record<string, string> };
  }

  async function receiptOf(agent: Agent, location: string): Promise<string> {
    const page = await agent.get(location).expect(200);
    expect(page.headers['cache-control']).toBe('no-store');
    return RECEIPT.exec(page.text)![1]!;
  }

  it('the same cast sent again after a lost answer shows the same receipt and casts once', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const m = await confirmed(f, f.codes[0]!, [1, 3]);
    // The answer is lost: the browser never sees the redirect or its cookies, and sends the same form again.
    const first = await request(s.app).post(`/vote/${f.id}/cast`).set('Cookie', m.jar.header()).type('form').send(m.fields).expect(303);
    const retry = await post(m.agent, `/vote/${f.id}/cast`, m.fields).expect(303);
    expect(retry.headers.location).toBe(first.headers.location);
    const receipt = await receiptOf(m.agent, retry.headers.location!);
    expect(await receiptOf(m.agent, retry.headers.location!)).toBe(receipt); // Reload shows it again
    expect(await checkReceipt(s.ctx, { electionId: f.id, receipt })).toBe(true);
    expect((await countTurnout(s.ctx.knex, f.id)).ballotsCast).toBe(1);
    // Two identical submissions at once (a double click) also cast once and both get the receipt.
    const twice = await confirmed(f, f.codes[1]!, [0]);
    const both = await Promise.all([0, 1].map(() => post(twice.agent, `/vote/${f.id}/cast`, twice.fields)));
    expect(both.map((r) => r.status)).toEqual([303, 303]);
    expect((await countTurnout(s.ctx.knex, f.id)).ballotsCast).toBe(2);
  });

  it('the receipt never travels in a URL; another browser, or one without the step cookie, gets nothing more', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const m = await confirmed(f, f.codes[0]!, [2]);
    const cast = await castFrom(m, f.id, m.page.text);
    expect([cast.status, cast.location]).toEqual([303, `/vote/${f.id}/receipt`]);
    const cookie = cast.setCookies.find((c) => c.startsWith('vt-receipt='))!;
    expect(cookie).toMatch(/HttpOnly/i);
    expect(cookie).toContain(`Path=/vote/${f.id}/receipt`);
    const receipt = await receiptOf(m.agent, cast.location!);
    expect(cookie).not.toContain(receipt.replace('-', ''));
    const stranger = request.agent(s.app);
    const gone = await stranger.get(`/vote/${f.id}/receipt`).expect(404);
    expect(gone.text).toContain('There is no receipt to show here');
    expect(gone.text).not.toContain(receipt);
    // The same form from another browser (no step cookie): nothing is cast, and no receipt is shown.
    const other = await begin(f);
    const refused = await post(other.agent, `/vote/${f.id}/cast`, { ...m.fields, _csrf: other.csrf }).expect(409);
    expect(refused.text).toContain('Nothing was cast just now');
    expect(refused.text).not.toContain(receipt);
    // The same code typed in another browser, read back and cast: just "already used".
    const again = await confirmed(f, f.codes[0]!, [2]);
    const used = await castFrom(again, f.id, again.page.text);
    expect(used.status).toBe(409);
    expect(used.text).toContain('already been used');
    expect(used.text).not.toContain(receipt);
    expect((await countTurnout(s.ctx.knex, f.id)).ballotsCast).toBe(1);
  });

  it('stores only a keyed hash of the token and a token-sealed receipt, and drops them at the tally', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const m = await confirmed(f, f.codes[0]!, [0]);
    const cast = await castFrom(m, f.id, m.page.text);
    const receipt = (await receiptOf(m.agent, cast.location!)).replace('-', '');
    const rows = await s.ctx.knex('cast_tokens').where({ election_id: f.id });
    expect(rows).toHaveLength(1);
    expect(Object.keys(rows[0]).sort()).toEqual(['election_id', 'sealed_receipt', 'token_hash']);
    const text = JSON.stringify(
      rows.map((r) => ({ ...r, h: Buffer.from(r.token_hash).toString('latin1'), r: Buffer.from(r.sealed_receipt).toString('latin1') })),
    );
    expect(text).not.toContain(receipt);
    s.clock.advance(8 * 24 * 3600_000);
    await closeAndTally(s.ctx, { electionId: f.id, organiserId: s.organiserId, passphrase: FIXTURE_PASSPHRASE });
    expect(await s.ctx.knex('cast_tokens').where({ election_id: f.id })).toHaveLength(0);
  });
});
