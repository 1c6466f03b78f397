import { describe, expect, it } from 'vitest';
import { buildPublicStatement, canonicalJson, makeExponentialDraw, recheckStatement } from '../../../src/mechanism/index.ts';
import { schemaProblems } from '../../../src/statement/format.ts';

// A tenants' association choosing repairs (invented scenario).
const labels = ['Boiler', 'Roof', 'Lift', 'Windows'];
const at = '2026-12-02T13:00Z';
const input = (liveTurnout: { epsilon: string; releases: number; intervalHours: number } | null, publishedTurnout: number | null = null) => ({
  draw: makeExponentialDraw({ epsilon: '1', options: 4, seats: 1, neighbour: 'replace-one' }),
  electionId: '00000000-0000-4000-8000-000000000001',
  electionTitle: 'Repairs to fund first',
  keyId: '0123456789abcdef',
  drawSequence: 1,
  drawnAt: at,
  optionLabels: labels,
  winners: [1],
  publishedTurnout,
  liveTurnout,
  ledger: {
    groupId: '00000000-0000-4000-8000-000000000002',
    groupName: 'Tenants',
    windowStart: '2025-12-02T13:00Z',
    windowEnd: at,
    draws: 1,
    howVotedEpsilon: '1',
    whetherVotedEpsilon: '1.5',
    anyoneVotedReleases: 1,
    exactTurnoutReleases: 0,
  },
});
const envelope = (s: unknown) =>
  JSON.parse(JSON.stringify({ statement: s, signature: { alg: 'Ed25519', keyId: '0123456789abcdef', value: 'A'.repeat(86) } }));

describe('the statement names a live turnout, its ε and its releases', () => {
  it('off: no liveTurnout field at all, so statements without one are unchanged byte for byte', () => {
    const s = buildPublicStatement(input(null));
    expect('liveTurnout' in s.released).toBe(false);
    expect(canonicalJson(s)).not.toContain('liveTurnout');
    // The draw at ε = 1 under replace-one: whether a member voted is a monotone change, ε/2 (whetherVoted.test.ts).
    expect(s.privacy.whetherVoted).toEqual({ epsilon: '0.5', factorAtMost: 1.65 }); // e^0.5 = 1.6487, rounded up
  });

  it('on: 168 hourly releases at ε = 0.5, node scale 16; whether a member voted is 0.5 + 0.5 (the draw at ε/2 and the live turnout, basic composition); schema and recheck agree', () => {
    const s = buildPublicStatement(input({ epsilon: '0.5', releases: 168, intervalHours: 1 }));
    expect(s.released.liveTurnout).toEqual({ counter: 'binary-tree', epsilon: '0.5', releases: 168, intervalHours: 1, nodeScale: '16' });
    expect(s.privacy.whetherVoted).toEqual({ epsilon: '1', factorAtMost: 2.72 }); // e^1 = 2.7183, rounded up
    expect(s.privacy.howVoted.epsilon).toBe('1');
    expect(schemaProblems(envelope(s))).toEqual([]);
    const checks = recheckStatement(s);
    expect(checks.filter((c) => !c.ok)).toEqual([]);
    expect(checks.map((c) => c.what).join(' ')).toContain('168 releases at ε = 0.5 put noise of scale 16');
  });

  it('a statement that leaves the live turnout out of whether a member voted, or shrinks its noise, fails the recheck', () => {
    const s = buildPublicStatement(input({ epsilon: '0.5', releases: 168, intervalHours: 1 }));
    // The draw's 0.5 alone, the live turnout's 0.5 left out; nor may the draw's general ε replace the sum.
    const understated = { ...s, privacy: { ...s.privacy, whetherVoted: { epsilon: '0.5', factorAtMost: 1.65 } } };
    expect(recheckStatement(understated).some((c) => !c.ok && c.what.startsWith('whether a member voted'))).toBe(true);
    const lessNoise = { ...s, released: { ...s.released, liveTurnout: { ...s.released.liveTurnout!, nodeScale: '8' } } };
    expect(recheckStatement(lessNoise).some((c) => !c.ok && c.what.includes('live turnout'))).toBe(true);
    expect(
      schemaProblems(envelope({ ...s, released: { ...s.released, liveTurnout: { ...s.released.liveTurnout!, intervalHours: 2 } } })),
    ).not.toEqual([]);
  });

  it('with the exact turnout published, whether a member voted stays unprotected', () => {
    const s = buildPublicStatement(input({ epsilon: '0.5', releases: 24, intervalHours: 1 }, 40));
    expect(s.privacy.whetherVoted).toBeNull();
    expect(s.released.liveTurnout?.nodeScale).toBe('10');
    expect(recheckStatement(s).filter((c) => !c.ok)).toEqual([]);
  });
});
