import { describe, expect, it } from 'vitest';
import { marginChart, marginRows, percentDown } from '../../../src/web/presenters/marginChart.ts';
import { guidanceFor } from '../../../src/web/presenters/guidance.ts';

const table = [
  { margin: 0, minProbability: 0.3333 },
  { margin: 5, minProbability: 0.8 },
  { margin: 10, minProbability: 0.97 },
  { margin: 20, minProbability: 0.999 },
];

describe('marginChart', () => {
  it('maps margin 0 to the left edge and probability 1 to the top of the plot', () => {
    const c = marginChart(table, 10, { title: 't', desc: 'd' });
    const pts = c.points.split(' ').map((p) => p.split(',').map(Number));
    expect(pts).toHaveLength(4);
    expect(pts[0]![0]).toBe(c.plot.left);
    expect(pts[3]![0]).toBe(c.plot.right);
    // y = bottom − (bottom − top)·p
    expect(pts[0]![1]).toBeCloseTo(c.plot.bottom - (c.plot.bottom - c.plot.top) * 0.3333, 1);
    expect(c.y95).toBeCloseTo(c.plot.bottom - (c.plot.bottom - c.plot.top) * 0.95, 1);
    expect(c.mark).toMatchObject({ margin: 10, x: (c.plot.left + c.plot.right) / 2 });
    expect(c.yTicks.map((t) => t.label)).toEqual(['0%', '25%', '50%', '75%', '100%']);
    expect(c.xTicks.map((t) => t.label)).toEqual(['0', '5', '10', '15', '20']);
  });

  it('has no marker when the 95% margin is not a table row', () => {
    expect(marginChart(table, 7, { title: 't', desc: 'd' }).mark).toBeNull();
  });
});

describe('marginRows and percentDown', () => {
  it('keeps the marked margins and flags them', () => {
    const rows = marginRows(table, [10], 2);
    expect(rows.map((r) => r.margin)).toEqual([0, 10, 20]);
    expect(rows.find((r) => r.margin === 10)!.marked).toBe(true);
  });

  it('rounds down so a shown chance never overstates the bound', () => {
    expect(percentDown(0.9999)).toBe('99.9%');
    expect(percentDown(0.95)).toBe('95.0%');
    expect(percentDown(0.3333)).toBe('33.3%');
  });
});

describe('guidanceFor', () => {
  it('matches the closed forms for 3 options, ε = 1, one seat, replace-one', () => {
    const g = guidanceFor({ epsilon: '1', options: 3, seats: 1, neighbour: 'replace-one', expectedVoters: 200 });
    if (!g.ready) throw new Error(g.reason);
    // a = ε/2; P(leader) ≥ 1/(1 + (d−1)e^(−a m)) ≥ 0.95 ⇔ m ≥ 2 ln(2·19) = 7.275 → 8 (DESIGN §4 margin table).
    expect(g.margin95).toBe(8);
    // Dwork & Roth 2014, Cor. 3.12: (2/ε)(ln 3 + ln 20) = 8.1887 → 8.19 rounded up.
    expect(g.withinApprovals).toBe(8.19);
    // 8 ≤ 200/10: a lead of one voter in ten suffices (assessElectorate's "clear").
    expect(g.electorate?.level).toBe('clear');
    expect(g.chart.desc).toContain('8 approvals');
  });

  it('says 2ε for how a member voted under add/remove', () => {
    const g = guidanceFor({ epsilon: '0.5', options: 4, seats: 1, neighbour: 'add-remove', expectedVoters: null });
    if (!g.ready) throw new Error(g.reason);
    expect(g.whetherVotedEpsilon).toBe('0.5');
    expect(g.howVotedEpsilon).toBe('1');
    expect(g.electorate).toBeNull();
  });

  it.each([
    [{ epsilon: '1', options: 1, seats: 1 }, 'at least two options'],
    [{ epsilon: '1', options: 3, seats: 3 }, 'between 1 and 2 seats'],
    [{ epsilon: 'abc', options: 3, seats: 1 }, 'decimal from 0.01 to 10'],
  ])('is not ready for %j', (input, reason) => {
    const g = guidanceFor({ neighbour: 'replace-one', expectedVoters: null, ...input });
    expect(g.ready).toBe(false);
    if (!g.ready) expect(g.reason.toLowerCase()).toContain(reason.toLowerCase());
  });
});
