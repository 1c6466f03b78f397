import { describe, expect, it } from 'vitest';
import { memoised } from '../../../src/web/presenters/memo.ts';

describe('memoised presenter pieces', () => {
  it('computes once per key, keeps different keys apart, and forgets the oldest past its size', () => {
    const calls: string[] = [];
    const chart = memoised(
      (epsilon: string, options: number) => {
        calls.push(`${epsilon}/${options}`);
        return { epsilon, options };
      },
      (epsilon, options) => `${epsilon}|${options}`,
      2,
    );
    const a = chart('1', 5);
    expect(chart('1', 5)).toBe(a);
    expect(chart('0.5', 5)).toEqual({ epsilon: '0.5', options: 5 });
    expect(calls).toEqual(['1/5', '0.5/5']);
    chart('2', 5); // a third key: '1|5', the oldest, goes
    chart('1', 5);
    expect(calls).toEqual(['1/5', '0.5/5', '2/5', '1/5']);
  });
});
