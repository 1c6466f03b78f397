import { describe, expect, it } from 'vitest';
import {
  buildStatement,
  describeStatement,
  makeExponentialDraw,
  makePermuteAndFlipDraw,
} from '../../../src/mechanism/index.ts';

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
    const pf = describeStatement(
      buildStatement({ draw: makePermuteAndFlipDraw(settings), optionLabels: labels, winners: [0, 1, 2], turnout: null }),
    );
    const em = describeStatement(
      buildStatement({ draw: makeExponentialDraw(settings), optionLabels: labels, winners: [0, 1, 2], turnout: null }),
    );
    expect(pf.paragraphs.join(' ')).toContain('Draw rule: permute-and-flip.');
    expect(em.paragraphs.join(' ')).toContain('Draw rule: the exponential mechanism.');
  });
});
