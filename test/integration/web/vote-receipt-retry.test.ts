import { describe, expect, it } from 'vitest';
import request from 'supertest';
import { checkReceipt } from '../../../src/elections/checkReceipt.ts';
import { closeAndTally } from '../../../src/elections/closeAndTally.ts';
import { countTurnout } from '../../../src/elections/turnout.ts';
import { engines } from '../../helpers/databases.ts';
import { FIXTURE_PASSPHRASE, csrfFrom, openElectionFixture, type ElectionFixture } from '../../helpers/fixtures.ts';
import { useMemberSuite, type Agent } from '../../helpers/memberSuite.ts';

const RECEIPT = /<p class="receipt">([0-9A-Z]{5}-[0-9A-Z]{5})<\/p>/;

/**
 * A lost answer must not strand a member: the same confirmation sent again returns the same
 * receipt. Anyone without that page's one-time token learns only what the cast step tells anyone
 * ("already used"). After casting, the browser is redirected, and only it can show the receipt.
 */
describe.each(engines)('a member can always get their receipt [%s]', (engine) => {
  const s = useMemberSuite(engine);
  const { begin, post } = s;

  async function confirmed(f: ElectionFixture, code: string, approve: string[]) {
    const browser = await begin(f);
    const page = await post(browser.agent, `/vote/${f.id}/confirm`, { _csrf: browser.csrf, code, approve }).expect(200);
    const castToken = /name="castToken" value="([^"]+)"/.exec(page.text)![1]!;
    return { ...browser, fields: { _csrf: csrfFrom(page.text), code, approve, castToken } };
  }

  async function receiptOf(agent: Agent, location: string): Promise<string> {
    const page = await agent.get(location).expect(200);
    expect(page.headers['cache-control']).toBe('no-store');
    return RECEIPT.exec(page.text)![1]!;
  }

  it('the same submission sent again after a lost answer shows the same receipt and casts once', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const m = await confirmed(f, f.codes[0]!, ['1', '3']);
    const first = await post(m.agent, `/vote/${f.id}/cast`, m.fields).expect(303);
    // The answer is lost: the browser never follows the redirect, and sends the same form again.
    const retry = await post(m.agent, `/vote/${f.id}/cast`, m.fields).expect(303);
    expect(retry.headers.location).toBe(first.headers.location);
    const receipt = await receiptOf(m.agent, retry.headers.location!);
    expect(await receiptOf(m.agent, retry.headers.location!)).toBe(receipt); // Reload shows it again
    expect(await checkReceipt(s.ctx, { electionId: f.id, receipt })).toBe(true);
    expect((await countTurnout(s.ctx.knex, f.id)).ballotsCast).toBe(1);
    // Two identical submissions at once (a double click) also cast once and both get the receipt.
    const twice = await confirmed(f, f.codes[1]!, ['0']);
    const both = await Promise.all([0, 1].map(() => post(twice.agent, `/vote/${f.id}/cast`, twice.fields)));
    expect(both.map((r) => r.status)).toEqual([303, 303]);
    expect((await countTurnout(s.ctx.knex, f.id)).ballotsCast).toBe(2);
  });

  it('the receipt never travels in a URL; another browser, or one without the token, gets nothing more', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const m = await confirmed(f, f.codes[0]!, ['2']);
    const cast = await post(m.agent, `/vote/${f.id}/cast`, m.fields).expect(303);
    expect(cast.headers.location).toBe(`/vote/${f.id}/receipt`);
    const cookie = (cast.headers['set-cookie'] as unknown as string[]).find((c) => c.startsWith('vt-receipt='))!;
    expect(cookie).toMatch(/HttpOnly/i);
    expect(cookie).toContain(`Path=/vote/${f.id}/receipt`);
    const receipt = await receiptOf(m.agent, cast.headers.location!);
    expect(cookie).not.toContain(receipt.replace('-', ''));
    const stranger = request.agent(s.app);
    const gone = await stranger.get(`/vote/${f.id}/receipt`).expect(404);
    expect(gone.text).toContain('There is no receipt to show here');
    expect(gone.text).not.toContain(receipt);
    // The same code and ticks without this page's token: just "already used".
    const other = await begin(f);
    const { castToken: _unused, ...withoutToken } = m.fields;
    const refused = await post(other.agent, `/vote/${f.id}/cast`, { ...withoutToken, _csrf: other.csrf }).expect(409);
    expect(refused.text).not.toContain(receipt);
    const forged = await post(other.agent, `/vote/${f.id}/cast`, { ...withoutToken, _csrf: other.csrf, castToken: 'A'.repeat(43) }).expect(409);
    expect(forged.text).not.toContain(receipt);
  });

  it('stores only a keyed hash of the token and a token-sealed receipt, and drops them at the tally', async () => {
    const f = await openElectionFixture(s.ctx, s.organiserId);
    const m = await confirmed(f, f.codes[0]!, ['0']);
    const cast = await post(m.agent, `/vote/${f.id}/cast`, m.fields).expect(303);
    const receipt = (await receiptOf(m.agent, cast.headers.location!)).replace('-', '');
    const rows = await s.ctx.knex('cast_tokens').where({ election_id: f.id });
    expect(rows).toHaveLength(1);
    expect(Object.keys(rows[0]).sort()).toEqual(['election_id', 'sealed_receipt', 'token_hash']);
    const text = JSON.stringify(
      rows.map((r) => ({ ...r, h: Buffer.from(r.token_hash).toString('latin1'), r: Buffer.from(r.sealed_receipt).toString('latin1') })),
    );
    expect(text).not.toContain(receipt);
    expect(text).not.toContain(m.fields.castToken);
    expect(text).not.toContain(Buffer.from(m.fields.castToken, 'base64url').toString('latin1'));
    s.clock.advance(8 * 24 * 3600_000);
    await closeAndTally(s.ctx, { electionId: f.id, organiserId: s.organiserId, passphrase: FIXTURE_PASSPHRASE });
    expect(await s.ctx.knex('cast_tokens').where({ election_id: f.id })).toHaveLength(0);
  });
});
