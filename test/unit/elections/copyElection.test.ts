import { describe, expect, it } from 'vitest';
import { COPY_LEAD_MS, COPY_SUFFIX, copyTimes, copyTitle } from '../../../src/elections/copyElection.ts';
import { DRAFT_LIMITS } from '../../../src/elections/draft.ts';
import { utcToWallClockText } from '../../../src/elections/time.ts';

const DAY = 24 * 3600_000;

describe('copyTitle', () => {
  it('adds the mark to a title that has room', () => {
    expect(copyTitle('Name the new boat')).toBe('Name the new boat (copy)');
  });

  it('shortens a long title, whole characters only, and stays within the limit', () => {
    const long = `${'Bike shed repairs '.repeat(11)}`.slice(0, DRAFT_LIMITS.titleMax);
    const t = copyTitle(long);
    expect(t.length).toBeLessThanOrEqual(DRAFT_LIMITS.titleMax);
    expect(t.endsWith(`…${COPY_SUFFIX}`)).toBe(true);
    // A character outside the BMP at the cut is not split in half.
    const emoji = '🚣'.repeat(DRAFT_LIMITS.titleMax / 2);
    const e = copyTitle(emoji);
    expect(e.length).toBeLessThanOrEqual(DRAFT_LIMITS.titleMax);
    expect(e).not.toMatch(/[\uD800-\uDBFF](?![\uDC00-\uDFFF])/);
  });

  it('keeps a title exactly at the room left', () => {
    const fits = 'x'.repeat(DRAFT_LIMITS.titleMax - COPY_SUFFIX.length);
    expect(copyTitle(fits)).toBe(`${fits}${COPY_SUFFIX}`);
  });
});

describe('copyTimes', () => {
  const now = new Date('2026-06-06T09:00:00Z');

  it('keeps times that open at least a day ahead', () => {
    const src = { opensAt: new Date(now.getTime() + COPY_LEAD_MS), closesAt: new Date(now.getTime() + 3 * DAY), timeZone: 'Europe/London' };
    expect(copyTimes(src, now)).toEqual({ opensAt: src.opensAt, closesAt: src.closesAt, weeks: 0 });
  });

  it('moves past times the fewest whole weeks that open a day ahead, keeping weekday, time of day and length', () => {
    const src = { opensAt: new Date('2026-06-02T17:00:00Z'), closesAt: new Date('2026-06-05T21:00:00Z'), timeZone: 'America/Toronto' };
    const t = copyTimes(src, now);
    expect(t.weeks).toBe(1);
    expect(t.opensAt.toISOString()).toBe('2026-06-09T17:00:00.000Z');
    expect(t.closesAt.getTime() - t.opensAt.getTime()).toBe(src.closesAt.getTime() - src.opensAt.getTime());
    // Opening just under a day ahead after one week: a second week.
    const close = { ...src, opensAt: new Date('2026-05-30T10:00:00Z'), closesAt: new Date('2026-05-31T10:00:00Z') };
    expect(copyTimes(close, now).weeks).toBe(2);
  });

  it('keeps the time of day on the zone’s clocks across a change of offset', () => {
    // 09:00 in London in winter (GMT) copied into summer (BST): still 09:00 there, an hour earlier in UTC.
    const src = { opensAt: new Date('2026-03-03T09:00:00Z'), closesAt: new Date('2026-03-04T09:00:00Z'), timeZone: 'Europe/London' };
    const t = copyTimes(src, now);
    expect(utcToWallClockText(t.opensAt, 'Europe/London')).toMatch(/T09:00$/);
    expect(t.opensAt.getUTCHours()).toBe(8);
    expect(t.opensAt.getUTCDay()).toBe(src.opensAt.getUTCDay());
    expect(t.opensAt.getTime()).toBeGreaterThanOrEqual(now.getTime() + COPY_LEAD_MS);
    expect(t.opensAt.getTime() - now.getTime()).toBeLessThan(COPY_LEAD_MS + 7 * DAY);
  });

  it('an opening that would fall in a clock gap moves by whole days of 24 hours instead', () => {
    // 01:30 on 29 March 2026 does not exist in London (01:00 GMT → 02:00 BST); the source is a week earlier.
    const src = { opensAt: new Date('2026-03-22T01:30:00Z'), closesAt: new Date('2026-03-22T05:30:00Z'), timeZone: 'Europe/London' };
    const t = copyTimes(src, new Date('2026-03-25T12:00:00Z'));
    expect(t.weeks).toBe(1);
    expect(t.opensAt.toISOString()).toBe('2026-03-29T01:30:00.000Z');
  });
});
