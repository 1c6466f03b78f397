import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import request from 'supertest';
import { publicKeyFromSeed, signingKeyId } from '../../../src/custody/index.ts';
import { verifyStatementText } from '../../../src/cli/commands/verify.ts';
import { main } from '../../../src/cli/main.ts';
import { canonicalJson, type GroupStatementLedger, type StatementEnvelope } from '../../../src/mechanism/index.ts';
import { schemaProblems } from '../../../src/statement/format.ts';
import { engines } from '../../helpers/databases.ts';
import { openStoredBallots } from '../../helpers/fixtures.ts';
import { publishResult } from '../../../src/elections/publishResult.ts';
import { useMemberSuite } from '../../helpers/memberSuite.ts';

describe.each(engines)('the signed statement, the key and the ledger pages [%s]', (engine) => {
  const s = useMemberSuite(engine);

  // Distinctive approval counts: 37, 23 and 11 for the first three options, none for the fourth.
  // ε = 4 keeps every data-free figure (margins 0..5, bounds ≈ 2.2) well away from these numbers.
  const COUNTS = [37, 23, 11, 0];
  const TURNOUT = 40;
  const ballots = Array.from({ length: TURNOUT }, (_, i) => COUNTS.flatMap((c, j) => (i < c ? [j] : [])).concat(i >= 37 ? [3] : []));

  async function download(id: string): Promise<string> {
    const res = await request(s.app)
      .get(`/results/${id}/statement.json`)
      .expect(200)
      .expect('content-type', /application\/json/);
    return res.text;
  }
  async function keyFile(keyId: string): Promise<string> {
    return (await request(s.app).get(`/keys/${keyId}.json`).expect(200)).text;
  }

  /** Every maximal digit run of a page, after taking out ids, keys and tokens that are random by design. */
  function digitRuns(text: string, randomParts: string[]): Set<number> {
    // Path geometry of drawn icons (the d attribute of SVG paths) is left out: it is artwork, not data.
    let cleaned = text
      .replace(/name="_csrf" value="[^"]*"/g, ' ')
      .replace(/ d="[^"]*"/g, ' ')
      .replace(/[0-9a-f]{4}( [0-9a-f]{4}){15}/g, ' ')
      // SHA-256 digests written whole (the offline checkers' on /verify): hashes of files, not data.
      .replace(/\b[0-9a-f]{64}\b/g, ' ');
    for (const part of randomParts) cleaned = cleaned.split(part).join(' ');
    return new Set([...cleaned.matchAll(/\d+/g)].map((m) => Number(m[0])));
  }

  it('publishes a statement that validates, verifies offline, and holds no count on any page', async () => {
    const d = await s.decided(ballots, { epsilon: '4', codes: TURNOUT, memberGroup: 'Rowing club members' }, false);
    // The sealed ballots really hold 37, 23 and 11 approvals, so the scan below looks for something real.
    const opened = await openStoredBallots(s.ctx, d.f.id);
    expect([0, 1, 2, 3].map((i) => opened.filter((b) => b.includes(i)).length)).toEqual([37, 23, 11, 3]);
    await publishResult(s.ctx, { electionId: d.f.id, organiserId: s.organiserId });
    const text = await download(d.f.id);
    const envelope = JSON.parse(text) as StatementEnvelope;
    expect(schemaProblems(envelope)).toEqual([]);
    expect(text).toBe(canonicalJson(envelope) + '\n');
    const st = envelope.statement;
    expect(st.electionId).toBe(d.f.id);
    expect(st.keyId).toBe(signingKeyId(publicKeyFromSeed(s.ctx.secrets.signingSeed)));
    expect(st.drawnAt).toMatch(/^\d{4}-\d\d-\d\dT\d\d:\d\dZ$/);
    expect(st.mechanism).toMatchObject({ rule: 'exponential', epsilon: '4', neighbour: 'replace-one', seats: 1 });
    expect(st.released).toEqual({ anyoneVoted: true, winners: d.winners, turnout: null });
    expect(st.privacy.unprotected).toEqual(['anyone-voted']);
    expect(st.ledger).toMatchObject({ groupName: 'Rowing club members', draws: 1, howVotedEpsilon: '4', whetherVotedEpsilon: '2' }); // ε/2 for whether, under replace-one

    const schema = await request(s.app)
      .get('/schemas/statement-v1.schema.json')
      .expect(200)
      .expect('content-type', /schema\+json/);
    expect(JSON.parse(schema.text).$schema).toBe('https://json-schema.org/draft/2020-12/schema');

    const key = await keyFile(st.keyId);
    const ok = verifyStatementText(text, key, d.f.id);
    expect(ok.lines.filter((l) => !l.ok)).toEqual([]);
    expect(ok.passed).toBe(true);

    // Every page someone can reach about this result.
    const resultPage = (await request(s.app).get(`/results/${d.f.id}`).expect(200)).text;
    expect(resultPage).toContain(`/results/${d.f.id}/statement.json`);
    const fingerprint = JSON.parse(key).fingerprint as string;
    expect(resultPage).toContain(fingerprint);
    const ledgerPage = (
      await request(s.app)
        .get(`/groups/${(st.ledger as GroupStatementLedger).groupId}/ledger`)
        .expect(200)
    ).text;
    expect(ledgerPage).toContain('Rowing club members');
    expect(ledgerPage).toContain('Theorem 3.16');
    const keysPage = (await request(s.app).get('/keys').expect(200)).text;
    expect(keysPage).toContain(fingerprint);
    const keysJson = (await request(s.app).get('/.well-known/veiltally-keys.json').expect(200)).text;
    const verifyPage = (await request(s.app).get('/verify').expect(200)).text;
    expect(verifyPage).toContain('veiltally verify');

    const random = [d.f.id, (st.ledger as GroupStatementLedger).groupId, st.keyId, envelope.signature.value, JSON.parse(key).publicKey];
    for (const [name, page] of Object.entries({ text, resultPage, ledgerPage, keysPage, keysJson, verifyPage, key })) {
      const runs = digitRuns(page, random);
      for (const c of COUNTS.slice(0, 3)) expect(runs.has(c), `count ${c} appears in ${name}`).toBe(false);
      expect(runs.has(TURNOUT), `unpublished turnout appears in ${name}`).toBe(false);
    }
    // Control: the scan does find a number that is there.
    expect(digitRuns(text.replace('"drawSequence":', '"drawSequence":37,"x":'), random).has(37)).toBe(true);
  });

  it('verify fails after tampering: a winner, ε, the election id, another key, one character, or no key', async () => {
    const d = await s.decided(ballots.slice(0, 12), { epsilon: '0.5', codes: 12 });
    const other = await s.decided(ballots.slice(0, 12), { epsilon: '0.5', codes: 12, title: 'Name the new coxed four' });
    const text = await download(d.f.id);
    const env = JSON.parse(text) as StatementEnvelope;
    const key = await keyFile(env.statement.keyId);
    expect(verifyStatementText(text, key, d.f.id).passed).toBe(true);

    const resign = (change: (st: StatementEnvelope['statement']) => void): string => {
      const copy = JSON.parse(text) as StatementEnvelope;
      change(copy.statement);
      return canonicalJson(copy);
    };
    const loser = env.statement.options.find((o) => !env.statement.released.winners.includes(o))!;
    const failsWith = (t: string, k: string | null, election: string | null, pattern: RegExp) => {
      const r = verifyStatementText(t, k, election);
      expect(r.passed).toBe(false);
      expect(
        r.lines
          .filter((l) => !l.ok)
          .map((l) => l.text)
          .join('\n'),
      ).toMatch(pattern);
    };
    failsWith(
      resign((st) => (st.released.winners = [loser])),
      key,
      null,
      /signature does NOT match/,
    );
    failsWith(
      resign((st) => (st.mechanism.epsilon = '0.6')),
      key,
      null,
      /signature does NOT match/,
    );
    failsWith(
      resign((st) => (st.electionId = other.f.id)),
      key,
      other.f.id,
      /signature does NOT match/,
    );
    // Replay: a genuine statement served as another election's is refused by the election check.
    failsWith(text, key, other.f.id, /not .*/);
    // One changed character in the signature, and one extra space anywhere.
    const sig = env.signature.value;
    failsWith(text.replace(sig, (sig[0] === 'A' ? 'B' : 'A') + sig.slice(1)), key, null, /signature does NOT match/);
    expect(text.startsWith('{"signature":')).toBe(true); // RFC 8785 §3.2.3: keys in UTF-16 code-unit order
    // Any layout verifies (the signature covers the canonical form of what is parsed): a browser's pretty-printed
    // view, saved, passes; the same view with one value changed does not.
    const pretty = JSON.stringify(JSON.parse(text), null, 2);
    const prettyResult = verifyStatementText(pretty, key, d.f.id);
    expect(prettyResult.lines.filter((l) => !l.ok)).toEqual([]);
    expect(prettyResult.passed).toBe(true);
    expect(prettyResult.lines.map((l) => l.text).join('\n')).toContain('laid out differently from the published bytes');
    const prettyTampered = JSON.parse(pretty) as StatementEnvelope;
    prettyTampered.statement.released.winners = [loser];
    failsWith(JSON.stringify(prettyTampered, null, 2), key, null, /signature does NOT match/);
    // A swapped key: a valid key of the right format that is not the one that signed.
    const wrongKey = JSON.stringify({ alg: 'Ed25519', publicKey: publicKeyFromSeed(Buffer.alloc(32, 7)).toString('base64url') });
    failsWith(text, wrongKey, null, /not the key the statement names[\s\S]*signature does NOT match/);
    // Without a key nothing vouches for the signer: the statement does not pass.
    failsWith(text, null, null, /NOT checked: no key/);
  });

  it('the verify command works on files: exit 0 when everything holds, 1 on a tampered file', async () => {
    const d = await s.decided(ballots.slice(0, 5), { epsilon: '1', codes: 5, publishTurnout: true });
    const text = await download(d.f.id);
    const env = JSON.parse(text) as StatementEnvelope;
    expect(env.statement.released.turnout).toEqual({ value: 5, exact: true, protected: false });
    expect(env.statement.privacy.whetherVoted).toBeNull();
    expect(env.statement.privacy.unprotected).toEqual(['anyone-voted', 'exact-turnout']);
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'vt-verify-'));
    try {
      fs.writeFileSync(path.join(dir, 'statement.json'), text);
      fs.writeFileSync(path.join(dir, 'key.json'), await keyFile(env.statement.keyId));
      fs.writeFileSync(path.join(dir, 'bad.json'), text.replace('"value":5', '"value":6'));
      const out: string[] = [];
      const io = { stdout: (t: string) => void out.push(t), stderr: (t: string) => void out.push(t) };
      const args = (f: string) => ['verify', path.join(dir, f), '--key', path.join(dir, 'key.json'), '--election', d.f.id];
      expect(await main(args('statement.json'), io)).toBe(0);
      expect(out.join('')).toContain('All checks passed.');
      expect(out.join('')).toContain('exact, not protected');
      out.length = 0;
      expect(await main(args('bad.json'), io)).toBe(1);
      expect(out.join('')).toContain('FAIL');
      expect(await main(['verify', path.join(dir, 'statement.json')], io)).toBe(1);
      expect(await main(['verify', path.join(dir, 'missing.json'), '--key', path.join(dir, 'key.json')], io)).toBe(2);
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });

  it('has no statement before publication, and unknown keys, groups and ids answer 404', async () => {
    const d = await s.decided(ballots.slice(0, 3), { codes: 3 }, false);
    await request(s.app).get(`/results/${d.f.id}/statement.json`).expect(404);
    await request(s.app).get('/results/not-an-id/statement.json').expect(404);
    await request(s.app).get('/keys/0123456789abcdef.json').expect(404);
    await request(s.app).get('/keys/nonsense.json').expect(404);
    await request(s.app).get('/groups/00000000-0000-4000-8000-000000000000/ledger').expect(404);
  });
});
