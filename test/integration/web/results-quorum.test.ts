import { describe, expect, it } from 'vitest';
import request from 'supertest';
import { verifyStatementText } from '../../../src/cli/commands/verify.ts';
import { canonicalJson, recheckStatement, type StatementEnvelope } from '../../../src/mechanism/index.ts';
import { schemaProblems } from '../../../src/statement/format.ts';
import { engines } from '../../helpers/databases.ts';
import { useMemberSuite } from '../../helpers/memberSuite.ts';

/**
 * A bylaw quorum (issue 20 item 3): set on the draft, it makes the draw release one exact bit, "quorum met: yes/no",
 * named in the signed statement as an unprotected release, in the ledger, on the result page, the minutes and the
 * announcement. The draw runs whether or not it was met. Without a quorum nothing about it appears anywhere.
 * Invented scenario: a rowing club's boat name, quorum 3.
 */
describe.each(engines)('a bylaw quorum in the result [%s]', (engine) => {
  const s = useMemberSuite(engine);

  async function published(id: string) {
    const text = (await request(s.app).get(`/results/${id}/statement.json`).expect(200)).text;
    const env = JSON.parse(text) as StatementEnvelope;
    const key = (await request(s.app).get(`/keys/${env.statement.keyId}.json`).expect(200)).text;
    const page = (await request(s.app).get(`/results/${id}`).expect(200)).text;
    const minutes = (await request(s.app).get(`/results/${id}/minutes`).expect(200)).text;
    const txt = (await request(s.app).get(`/results/${id}/announcement.txt`).expect(200)).text.replace(/\s+/g, ' ');
    const ledger = await s.ctx.knex('privacy_ledger').where({ election_id: id }).first('unprotected');
    const unprotected = typeof ledger.unprotected === 'string' ? JSON.parse(ledger.unprotected) : ledger.unprotected;
    return { text, env, key, page, minutes, txt, unprotected };
  }

  it('met: 4 ballots against a quorum of 3 release "yes", exactly, and every reader names it as unprotected', async () => {
    const d = await s.decided([[0], [0, 1], [2], [3]], { codes: 6, quorum: 3 });
    const r = await published(d.f.id);
    expect(r.env.statement.released.quorum).toEqual({ minimum: 3, met: true, exact: true, protected: false });
    expect(r.env.statement.privacy.unprotected).toEqual(['anyone-voted', 'quorum-met']);
    expect(r.unprotected).toEqual(['anyone-voted', 'quorum-met']);
    expect(d.winners).toHaveLength(1);
    expect(schemaProblems(r.env)).toEqual([]);
    expect(recheckStatement(r.env.statement).filter((c) => !c.ok)).toEqual([]);
    expect(verifyStatementText(r.text, r.key, d.f.id).passed).toBe(true);
    expect(r.page).toContain('<p id="quorum"><strong>Quorum met: yes. The ballots cast reached the quorum of 3 ballots.</strong>');
    expect(r.page).toContain('it is not protected by the privacy setting');
    expect(r.page).toContain('<li data-release="quorum-met">whether the quorum of 3 ballots was met: yes (exact, not protected)</li>');
    expect(r.minutes).toContain('<p id="quorum">Quorum met: yes.');
    expect(r.txt).toContain('Quorum met: yes. The ballots cast reached the quorum of 3 ballots. This answer is exact and not protected');
    // The turnout itself stays unpublished: the 4 appears nowhere on the page.
    expect(r.env.statement.released.turnout).toBeNull();
    expect(r.page).not.toMatch(/\b4 ballots\b/);
  });

  it('not met: 2 ballots against 3 release "no"; the draw still ran and the page defers to the bylaws; a flipped bit fails verification', async () => {
    const d = await s.decided([[1], [1, 2]], { codes: 6, quorum: 3 });
    expect(d.winners).toHaveLength(1);
    const r = await published(d.f.id);
    expect(r.env.statement.released.quorum).toEqual({ minimum: 3, met: false, exact: true, protected: false });
    expect(r.page).toContain('Quorum met: no. The ballots cast did not reach the quorum of 3 ballots. The draw ran anyway');
    expect(r.page).toContain('is for your organisation’s bylaws to decide');
    expect(r.minutes).toContain('Quorum met: no.');
    expect(r.txt).toContain('Quorum met: no.');
    expect(verifyStatementText(r.text, r.key, d.f.id).passed).toBe(true);
    // Flip the bit: the signature no longer matches.
    const flipped = {
      ...r.env,
      statement: { ...r.env.statement, released: { ...r.env.statement.released, quorum: { ...r.env.statement.released.quorum!, met: true } } },
    };
    const check = verifyStatementText(JSON.stringify(flipped), r.key, d.f.id);
    expect(check.passed).toBe(false);
    expect(
      check.lines
        .filter((l) => !l.ok)
        .map((l) => l.text)
        .join(' '),
    ).toContain('signature does NOT match');
  });

  it('not set: no quorum field, no "quorum-met", and the page and minutes never mention a quorum', async () => {
    const d = await s.decided([[0], [1]], { codes: 4 });
    const r = await published(d.f.id);
    expect('quorum' in r.env.statement.released).toBe(false);
    expect(canonicalJson(r.env.statement)).not.toContain('quorum');
    expect(r.env.statement.privacy.unprotected).toEqual(['anyone-voted']);
    expect(r.unprotected).toEqual(['anyone-voted']);
    for (const body of [r.page, r.minutes, r.txt]) expect(body.toLowerCase()).not.toContain('quorum');
  });

  it('with the exact turnout published, the bit agrees with it, and a statement where it does not fails the recheck', async () => {
    const d = await s.decided([[0], [1], [2]], { codes: 4, quorum: 3, publishTurnout: true });
    const r = await published(d.f.id);
    expect(r.env.statement.released.turnout?.value).toBe(3);
    expect(r.env.statement.released.quorum?.met).toBe(true);
    expect(r.env.statement.privacy.unprotected).toEqual(['anyone-voted', 'exact-turnout', 'quorum-met']);
    expect(recheckStatement(r.env.statement).filter((c) => !c.ok)).toEqual([]);
    const altered = { ...r.env.statement, released: { ...r.env.statement.released, quorum: { ...r.env.statement.released.quorum!, met: false } } };
    expect(recheckStatement(altered).some((c) => !c.ok && c.what.startsWith('the quorum'))).toBe(true);
  });
});
