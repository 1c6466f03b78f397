import { describe, expect, it } from 'vitest';
import { assessElectorate, makeExponentialDraw } from '../../../src/mechanism/index.ts';

// Rule under test (our own planning rule, documented in src/mechanism/electorate.ts):
// lottery if the 95% margin exceeds the electorate, noisy if it exceeds a tenth of it.
// The 95% margin for ε = 1, d = 3 is 8 (2·ln 38 = 7.28, rounded up; see bounds.test.ts).
const draw = makeExponentialDraw({ epsilon: '1', options: 3, seats: 1, neighbour: 'replace-one' });

describe('assessElectorate', () => {
  it.each([
    [100, 'clear'],
    [80, 'clear'],
    [79, 'noisy'],
    [20, 'noisy'],
    [8, 'noisy'],
    [7, 'lottery'],
    [1, 'lottery'],
  ] as const)('%i expected voters → %s', (voters, level) => {
    const result = assessElectorate(draw, voters);
    expect(result.level).toBe(level);
    expect(result.margin95).toBe(8);
    expect(result.message).toContain('at least 8 approvals');
  });

  it('a tenants’ association of 40 with ε = 0.1 over 6 repairs is close to a lottery', () => {
    const small = makeExponentialDraw({ epsilon: '0.1', options: 6, seats: 1, neighbour: 'replace-one' });
    const result = assessElectorate(small, 40);
    expect(result.level).toBe('lottery');
    expect(result.message).toContain('close to a lottery');
  });

  it('every message says the winner is drawn at random or warns of a lottery', () => {
    for (const voters of [1, 20, 500]) {
      expect(assessElectorate(draw, voters).message).toMatch(/drawn at random, weighted toward the most approved options|lottery/);
    }
  });
});
