import { describe, expect, it } from 'vitest';
import {
  buildPublicStatement,
  buildStatement,
  describeStatement,
  recheckStatement,
  makeExponentialDraw,
  makePermuteAndFlipDraw,
} from '../../../src/mechanism/index.ts';
import { schemaProblems } from '../../../src/statement/format.ts';

// A tenants' association choosing repairs (invented scenario).
const labels = ['Boiler', 'Roof', 'Lift', 'Windows', 'Intercom', 'Bins', 'Stairs', 'Garden'];
const settings = { epsilon: '1.5', options: 8, seats: 3, neighbour: 'replace-one' as const };

describe('the statement names the draw rule', () => {
  it('permute-and-flip: mechanism and sampler named, same ε, scale and composition as the exponential draw', () => {
    const pf = buildStatement({ draw: makePermuteAndFlipDraw(settings), optionLabels: labels, winners: [0, 1, 2], turnout: null });
    const em = buildStatement({ draw: makeExponentialDraw(settings), optionLabels: labels, winners: [0, 1, 2], turnout: null });
    expect(pf.mechanism).toBe('permute-and-flip');
    expect(pf.sampler).toBe('exact-bigint-permute-and-flip');
    expect(em.mechanism).toBe('exponential-mechanism');
    for (const key of ['epsilon', 'perRoundEpsilon', 'perRoundScale', 'composition', 'protects'] as const) {
      expect(pf[key]).toEqual(em[key]);
    }
    // Same accuracy margin (Dwork & Roth 2014, Cor. 3.12, valid for both; see bounds.ts), a
    // leader-probability table of its own that never promises less.
    expect(pf.bounds.withinApprovals).toBe(em.bounds.withinApprovals);
    expect(pf.bounds.marginFor['0.95']).toBeLessThan(em.bounds.marginFor['0.95']);
  });

  it('the member-facing text names the rule in plain words', () => {
    const pf = describeStatement(buildStatement({ draw: makePermuteAndFlipDraw(settings), optionLabels: labels, winners: [0, 1, 2], turnout: null }));
    const em = describeStatement(buildStatement({ draw: makeExponentialDraw(settings), optionLabels: labels, winners: [0, 1, 2], turnout: null }));
    expect(pf.paragraphs.join(' ')).toContain('Draw rule: permute-and-flip.');
    expect(em.paragraphs.join(' ')).toContain('Draw rule: the exponential mechanism.');
  });
});

describe('the signed statement format names the rule and is rechecked with it', () => {
  const at = '2026-12-02T13:00Z';
  const input = (draw: ReturnType<typeof makeExponentialDraw>) => ({
    draw,
    electionId: '00000000-0000-4000-8000-000000000001',
    electionTitle: 'Repairs to fund first',
    keyId: '0123456789abcdef',
    drawSequence: 1,
    drawnAt: at,
    optionLabels: labels,
    winners: [0, 1, 2],
    publishedTurnout: null,
    ledger: {
      groupId: '00000000-0000-4000-8000-000000000002',
      groupName: 'Tenants',
      windowStart: '2025-12-02T13:00Z',
      windowEnd: at,
      draws: 1,
      howVotedEpsilon: '1.5',
      whetherVotedEpsilon: '1.5',
      anyoneVotedReleases: 1,
      exactTurnoutReleases: 0,
    },
  });

  it('a permute-and-flip statement says so and every recheck passes; relabelled as exponential, the bounds no longer match', () => {
    const s = buildPublicStatement(input(makePermuteAndFlipDraw(settings)));
    expect(s.mechanism.rule).toBe('permute-and-flip');
    const checks = recheckStatement(s);
    expect(checks.every((c) => c.ok)).toBe(true);
    expect(checks.map((c) => c.what).join(' ')).toContain('permute-and-flip');
    const relabelled = { ...s, mechanism: { ...s.mechanism, rule: 'exponential' as const } };
    expect(
      recheckStatement(relabelled)
        .filter((c) => !c.ok)
        .map((c) => c.what)
        .join(' '),
    ).toContain('margin table');
    // The shipped JSON Schema accepts it (signature value: a well-formed placeholder, not checked here).
    const envelope = { statement: s, signature: { alg: 'Ed25519', keyId: s.keyId, value: 'A'.repeat(86) } };
    expect(schemaProblems(JSON.parse(JSON.stringify(envelope)))).toEqual([]);
  });

  it('an exponential statement rechecks; an unknown rule is refused; a rule that is not the draw’s is refused', () => {
    const s = buildPublicStatement(input(makeExponentialDraw(settings)));
    expect(s.mechanism.rule).toBe('exponential');
    expect(recheckStatement(s).every((c) => c.ok)).toBe(true);
    const odd = { ...s, mechanism: { ...s.mechanism, rule: 'coin-toss' as never } };
    expect(recheckStatement(odd)).toEqual([expect.objectContaining({ ok: false })]);
    expect(() => buildPublicStatement({ ...input(makeExponentialDraw(settings)), rule: 'permute-and-flip' })).toThrow(/rule/);
  });
});
