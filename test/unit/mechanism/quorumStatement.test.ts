import fs from 'node:fs';
import { describe, expect, it } from 'vitest';
import { buildPublicStatement, canonicalJson, makeDraw, recheckStatement, type PublicStatement } from '../../../src/mechanism/index.ts';
import { schemaProblems } from '../../../src/statement/format.ts';

// A tenants' association choosing repairs (invented scenario).
const at = '2026-12-02T13:00Z';
const ledger = {
  groupId: '00000000-0000-4000-8000-000000000002',
  groupName: 'Tenants',
  windowStart: '2025-12-02T13:00Z',
  windowEnd: at,
  draws: 1,
  howVotedEpsilon: '1.5',
  whetherVotedEpsilon: '2',
  anyoneVotedReleases: 1,
  exactTurnoutReleases: 0,
};
type Neighbour = 'replace-one' | 'add-remove';
type Rule = 'exponential' | 'permute-and-flip';
const input = (o: {
  neighbour?: Neighbour;
  rule?: Rule;
  publishedTurnout?: number | null;
  live?: boolean;
  quorum?: { minimum: number; ballots: number } | null;
  winners?: number[] | null;
}) => ({
  draw: makeDraw({ epsilon: '1.5', options: 4, seats: 2, neighbour: o.neighbour ?? 'replace-one', rule: o.rule ?? 'exponential' }),
  electionId: '00000000-0000-4000-8000-000000000001',
  electionTitle: 'Repairs to fund first',
  keyId: '0123456789abcdef',
  drawSequence: 3,
  drawnAt: at,
  optionLabels: ['Boiler', 'Roof', 'Lift', 'Windows'],
  winners: o.winners === undefined ? [1, 3] : o.winners,
  publishedTurnout: o.publishedTurnout ?? null,
  liveTurnout: o.live ? { epsilon: '0.5', releases: 24, intervalHours: 1 } : null,
  ...(o.quorum === undefined ? {} : { quorum: o.quorum }),
  ledger,
});
const envelope = (s: unknown) =>
  JSON.parse(JSON.stringify({ statement: s, signature: { alg: 'Ed25519', keyId: '0123456789abcdef', value: 'A'.repeat(86) } }));
const failed = (s: PublicStatement) => recheckStatement(s).filter((c) => !c.ok);

describe('a bylaw quorum in the signed statement: one exact, unprotected bit', () => {
  it('without a quorum every statement is byte for byte what main signed before quorums existed (fixture made at 4cd23ce), but for the tight ε/2', () => {
    const before = JSON.parse(fs.readFileSync(new URL('./fixtures/statements-before-quorum.json', import.meta.url), 'utf8')) as Record<
      string,
      string
    >;
    expect(Object.keys(before)).toHaveLength(8);
    for (const [name, bytes] of Object.entries(before)) {
      const [neighbour, rule, kind] = name.split(' ') as [Neighbour, Rule, 'live' | 'turnout'];
      const o = { neighbour, rule, publishedTurnout: kind === 'turnout' ? 7 : null, live: kind === 'live' };
      const old = JSON.parse(bytes) as PublicStatement;
      // Signed before the tight figure: the draw's 1.5 plus the live turnout's 0.5 for whether a member voted. Now,
      // under replace-one, the draw's part is 1.5/2 = 0.75: 1.25 in all, e^1.25 = 3.4903 → 3.50 (rounded up).
      const expected =
        neighbour === 'replace-one' && kind === 'live'
          ? canonicalJson({ ...old, privacy: { ...old.privacy, whetherVoted: { epsilon: '1.25', factorAtMost: 3.5 } } })
          : bytes;
      expect(canonicalJson(buildPublicStatement(input(o))), name).toBe(expected);
      expect(canonicalJson(buildPublicStatement(input({ ...o, quorum: null }))), name).toBe(expected);
      // And what was signed then under replace-one still rechecks: ε for the draw is the general bound, true if not
      // tight. (Under add-remove this input's ledger, 1.5 for how members voted, is below the draw's own 2ε = 3.)
      if (neighbour === 'replace-one') expect(failed(old), name).toEqual([]);
      if (neighbour === 'replace-one' && kind === 'live') {
        expect(
          recheckStatement(old)
            .map((c) => c.what)
            .join(' '),
          name,
        ).toContain('the general bound ε for the draw; the tight figure is ε/2');
      }
    }
  });

  it('met and not met: the bit, its minimum, "quorum-met" among the unprotected releases; schema and recheck agree', () => {
    for (const [ballots, met] of [
      [5, true],
      [4, true],
      [3, false],
    ] as const) {
      const s = buildPublicStatement(input({ quorum: { minimum: 4, ballots } }));
      expect(s.released.quorum).toEqual({ minimum: 4, met, exact: true, protected: false });
      expect(s.privacy.unprotected).toEqual(['anyone-voted', 'quorum-met']);
      // Not differentially private, so it changes no ε: whether a member voted keeps its figure.
      expect(s.privacy.whetherVoted).toEqual(buildPublicStatement(input({})).privacy.whetherVoted);
      expect(canonicalJson(s)).not.toContain(`"ballots"`);
      expect(schemaProblems(envelope(s))).toEqual([]);
      expect(failed(s)).toEqual([]);
      expect(
        recheckStatement(s)
          .map((c) => c.what)
          .join(' '),
      ).toContain(`the quorum of 4 ballot(s) is released as one exact, unprotected bit (met: ${met ? 'yes' : 'no'})`);
    }
  });

  it('no ballots: not met; a statement claiming it was met with no ballots fails the recheck', () => {
    const s = buildPublicStatement(input({ winners: null, quorum: { minimum: 1, ballots: 0 } }));
    expect(s.released.quorum?.met).toBe(false);
    expect(failed(s)).toEqual([]);
    const altered = { ...s, released: { ...s.released, quorum: { ...s.released.quorum!, met: true } } };
    expect(failed(altered).some((c) => c.what.startsWith('the quorum of 1 ballot(s)'))).toBe(true);
  });

  it('with the exact turnout published, the bit must agree with it: altering it fails the recheck', () => {
    const s = buildPublicStatement(input({ publishedTurnout: 6, quorum: { minimum: 6, ballots: 6 } }));
    expect(s.privacy.unprotected).toEqual(['anyone-voted', 'exact-turnout', 'quorum-met']);
    expect(failed(s)).toEqual([]);
    const altered = { ...s, released: { ...s.released, quorum: { ...s.released.quorum!, met: false } } };
    expect(failed(altered).some((c) => c.what.startsWith('the quorum of 6'))).toBe(true);
    const raised = { ...s, released: { ...s.released, quorum: { ...s.released.quorum!, minimum: 7 } } };
    expect(failed(raised).some((c) => c.what.startsWith('the quorum of 7'))).toBe(true);
    expect(() => buildPublicStatement(input({ publishedTurnout: 6, quorum: { minimum: 6, ballots: 5 } }))).toThrow(/published turnout/);
  });

  it('a quorum left out of the unprotected list, or listed without a quorum, fails the recheck', () => {
    const s = buildPublicStatement(input({ quorum: { minimum: 4, ballots: 9 } }));
    const hidden = { ...s, privacy: { ...s.privacy, unprotected: ['anyone-voted' as const] } };
    expect(failed(hidden).some((c) => c.what.startsWith('the unprotected releases are listed'))).toBe(true);
    const plain = buildPublicStatement(input({}));
    const claimed = { ...plain, privacy: { ...plain.privacy, unprotected: ['anyone-voted' as const, 'quorum-met' as const] } };
    expect(failed(claimed).some((c) => c.what.startsWith('the unprotected releases are listed'))).toBe(true);
  });

  it('the schema refuses a malformed quorum: a minimum of 0, a protected bit, an unknown field', () => {
    const s = buildPublicStatement(input({ quorum: { minimum: 4, ballots: 9 } }));
    const q = s.released.quorum!;
    for (const bad of [
      { ...q, minimum: 0 },
      { ...q, protected: true },
      { ...q, exact: false },
      { ...q, ballots: 9 },
      { minimum: 4, met: true },
    ]) {
      expect(schemaProblems(envelope({ ...s, released: { ...s.released, quorum: bad } })), JSON.stringify(bad)).not.toEqual([]);
    }
    expect(schemaProblems(envelope({ ...s, privacy: { ...s.privacy, unprotected: ['anyone-voted', 'quorum-reached'] } }))).not.toEqual([]);
    expect(() => buildPublicStatement(input({ quorum: { minimum: 0, ballots: 9 } }))).toThrow(/quorum/);
  });
});
