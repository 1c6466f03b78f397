import { describe, expect, it } from 'vitest';
import { ruleComparisonFor } from '../../../src/web/presenters/ruleComparison.ts';

/** The chance shown in a row's column for one rule. */
const column = (v: { rules: { id: string }[] }, row: { chances: string[] }, rule: string): string => {
  const at = v.rules.findIndex((r) => r.id === rule);
  if (at < 0) throw new Error(`no column for ${rule}`);
  return row.chances[at] as string;
};

/**
 * The organiser's side-by-side chances, against the closed forms written out here:
 * exponential mechanism 1/(1 + (d−1)x) (Dwork & Roth 2014, Def. 3.4) and permute-and-flip
 * (1 − (1 − x)^d)/(d·x) (McKenna & Sheldon 2020, Algorithm 1), x = e^(−a·lead), a = ε/2.
 */
const floorPct = (p: number) => `${(Math.floor(p * 1000) / 10).toFixed(1)}%`;
const em = (d: number, x: number) => 1 / (1 + (d - 1) * x);
const pf = (d: number, x: number) => (1 - (1 - x) ** d) / (d * x);

describe('ruleComparisonFor', () => {
  it('40 voters, 3 options, 1 seat, ε = 1: leads of 10 and 4 approvals', () => {
    const v = ruleComparisonFor({ epsilon: '1', options: 3, seats: 1, neighbour: 'replace-one', expectedVoters: 40, rule: 'exponential' });
    if (!v.ready) throw new Error(v.reason);
    expect(v.rows.map((r) => r.lead)).toEqual([10, 4]);
    for (const row of v.rows) {
      const x = Math.exp(-0.5 * row.lead);
      expect(column(v, row, 'exponential')).toBe(floorPct(em(3, x)));
      expect(column(v, row, 'permute-and-flip')).toBe(floorPct(pf(3, x)));
    }
    expect(v.chosenName).toBe('the exponential mechanism');
    expect(v.rules.map((r) => r.heading)).toEqual(['Exponential mechanism', 'Permute-and-flip']);
  });

  it('8 voters, 8 options, 3 seats, ε = 1.5 (a small tenants’ meeting): permute-and-flip is never lower', () => {
    const v = ruleComparisonFor({ epsilon: '1.5', options: 8, seats: 3, neighbour: 'replace-one', expectedVoters: 8, rule: 'permute-and-flip' });
    if (!v.ready) throw new Error(v.reason);
    expect(v.question).toContain('one of the 3 seats');
    for (const row of v.rows)
      expect(parseFloat(column(v, row, 'permute-and-flip'))).toBeGreaterThanOrEqual(parseFloat(column(v, row, 'exponential')));
    expect(v.chosen).toBe('permute-and-flip');
  });

  it('asks for the electorate, and for valid settings, before showing figures', () => {
    expect(ruleComparisonFor({ epsilon: '1', options: 3, seats: 1, neighbour: 'replace-one', expectedVoters: null, rule: 'exponential' }).ready).toBe(
      false,
    );
    expect(ruleComparisonFor({ epsilon: 'x', options: 3, seats: 1, neighbour: 'replace-one', expectedVoters: 10, rule: 'exponential' }).ready).toBe(
      false,
    );
  });
});
