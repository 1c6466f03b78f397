import { describe, expect, it } from 'vitest';
import { isTimeZone, parseWallClock, timeZones, utcToWallClockText, zonedToUtc } from '../../../src/elections/time.ts';
import { describeDuration, describeInstant, offsetLabel, shortInstant } from '../../../src/elections/timeText.ts';

/**
 * Known offsets from the tz database (IANA tzdata, files `europe` and `northamerica`):
 *   Rule EU 1981 max - Mar lastSun 1:00u 1:00 S   → 2026-03-29 01:00 UTC, London GMT → BST
 *   Rule EU 1996 max - Oct lastSun 1:00u 0    -   → 2026-10-25 01:00 UTC, London BST → GMT
 *   Rule US 2007 max - Mar Sun>=8  2:00  1:00 D   → 2026-03-08 02:00 EST (07:00 UTC), New York EST → EDT
 *   Rule US 2007 max - Nov Sun>=1  2:00  0    S   → 2026-11-01 02:00 EDT (06:00 UTC), New York EDT → EST
 * Europe/London is GMT+0 in winter and +1 in summer; America/New_York is −5 and −4.
 */
const utc = (text: string, zone: string) => {
  const r = zonedToUtc(text, zone);
  if (!r.ok) throw new Error(`${text} ${zone}: ${r.reason}`);
  return r.utc.toISOString();
};

describe('zonedToUtc: ordinary times', () => {
  it.each([
    ['2026-01-15T12:00', 'Europe/London', '2026-01-15T12:00:00.000Z'],
    ['2026-07-15T12:00', 'Europe/London', '2026-07-15T11:00:00.000Z'],
    ['2026-01-15T12:00', 'America/New_York', '2026-01-15T17:00:00.000Z'],
    ['2026-07-15T12:00', 'America/New_York', '2026-07-15T16:00:00.000Z'],
    // Asia/Kolkata is UTC+05:30 all year (tzdata `asia`: Zone Asia/Kolkata 5:30 - IST).
    ['2026-07-15T12:00', 'Asia/Kolkata', '2026-07-15T06:30:00.000Z'],
    ['2026-07-15T12:00', 'UTC', '2026-07-15T12:00:00.000Z'],
  ])('%s in %s is %s', (text, zone, expected) => {
    expect(utc(text, zone)).toBe(expected);
  });

  it('accepts a space instead of T', () => {
    expect(utc('2026-07-15 12:00', 'Europe/London')).toBe('2026-07-15T11:00:00.000Z');
  });
});

describe('zonedToUtc: spring forward (gap)', () => {
  it('London: 00:59 is still GMT, 02:00 is already BST', () => {
    expect(utc('2026-03-29T00:59', 'Europe/London')).toBe('2026-03-29T00:59:00.000Z');
    expect(utc('2026-03-29T02:00', 'Europe/London')).toBe('2026-03-29T01:00:00.000Z');
  });

  it.each([
    ['2026-03-29T01:00', 'Europe/London'],
    ['2026-03-29T01:30', 'Europe/London'],
    ['2026-03-29T01:59', 'Europe/London'],
    ['2026-03-08T02:00', 'America/New_York'],
    ['2026-03-08T02:30', 'America/New_York'],
  ])('%s does not exist in %s and is refused with a message', (text, zone) => {
    const r = zonedToUtc(text, zone);
    expect(r.ok).toBe(false);
    if (!r.ok) {
      expect(r.reason).toBe('gap');
      expect(r.message).toContain(zone);
      expect(r.message).toContain('jump forward');
    }
  });

  it('New York: 01:59 is EST, 03:00 is EDT', () => {
    expect(utc('2026-03-08T01:59', 'America/New_York')).toBe('2026-03-08T06:59:00.000Z');
    expect(utc('2026-03-08T03:00', 'America/New_York')).toBe('2026-03-08T07:00:00.000Z');
  });
});

describe('zonedToUtc: fall back (overlap) takes the first occurrence', () => {
  it('London 01:30 on 25 Oct 2026 happens at 00:30 UTC (BST) and 01:30 UTC (GMT): the earlier is used', () => {
    const r = zonedToUtc('2026-10-25T01:30', 'Europe/London');
    expect(r).toEqual({ ok: true, utc: new Date('2026-10-25T00:30:00Z'), ambiguous: true });
  });

  it('New York 01:30 on 1 Nov 2026 happens at 05:30 UTC (EDT) and 06:30 UTC (EST): the earlier is used', () => {
    const r = zonedToUtc('2026-11-01T01:30', 'America/New_York');
    expect(r).toEqual({ ok: true, utc: new Date('2026-11-01T05:30:00Z'), ambiguous: true });
  });

  it('times just outside the repeated hour are not ambiguous', () => {
    const before = zonedToUtc('2026-10-25T00:59', 'Europe/London');
    const after = zonedToUtc('2026-10-25T02:00', 'Europe/London');
    expect(before).toEqual({ ok: true, utc: new Date('2026-10-24T23:59:00Z'), ambiguous: false });
    expect(after).toEqual({ ok: true, utc: new Date('2026-10-25T02:00:00Z'), ambiguous: false });
  });
});

describe('round trip and display', () => {
  it('utcToWallClockText inverts zonedToUtc outside gaps', () => {
    for (const text of ['2026-03-29T02:00', '2026-06-01T09:15', '2026-10-25T01:30', '2026-12-31T23:59']) {
      const r = zonedToUtc(text, 'Europe/London');
      expect(r.ok).toBe(true);
      if (r.ok) expect(utcToWallClockText(r.utc, 'Europe/London')).toBe(text);
    }
  });

  it('offsetLabel shows the offset in force', () => {
    expect(offsetLabel(new Date('2026-10-25T00:30:00Z'), 'Europe/London')).toBe('UTC+01:00');
    expect(offsetLabel(new Date('2026-10-25T01:30:00Z'), 'Europe/London')).toBe('UTC+00:00');
    expect(offsetLabel(new Date('2026-11-01T06:30:00Z'), 'America/New_York')).toBe('UTC−05:00');
  });

  it('names the offset and zone in words, so both 01:30s of a fall-back night are told apart', () => {
    expect(describeInstant(new Date('2026-10-25T00:30:00Z'), 'Europe/London')).toBe('Sun, 25 Oct 2026, 01:30 (UTC+01:00, Europe/London)');
    expect(describeInstant(new Date('2026-10-25T01:30:00Z'), 'Europe/London')).toBe('Sun, 25 Oct 2026, 01:30 (UTC+00:00, Europe/London)');
    // A zone that is UTC itself is named once, not as "(UTC+00:00, UTC)".
    expect(describeInstant(new Date('2026-10-25T01:30:00Z'), 'UTC')).toBe('Sun, 25 Oct 2026, 01:30 (UTC)');
    expect(describeInstant(new Date('2026-10-25T01:30:00Z'), 'Etc/UTC')).toBe('Sun, 25 Oct 2026, 01:30 (UTC)');
    expect(shortInstant(new Date('2026-06-10T08:00:00Z'), 'Europe/London')).toBe('10 Jun 2026, 09:00');
  });
});

describe('bad input', () => {
  it.each(['', 'tomorrow', '2026-02-30T10:00', '2026-13-01T10:00', '2026-01-01T24:00', '2026-01-01T10:60', '1999-01-01T10:00', '2026-1-1T1:00'])(
    'rejects %j',
    (text) => {
      expect(parseWallClock(text)).toBeNull();
      const r = zonedToUtc(text, 'UTC');
      expect(r.ok).toBe(false);
      if (!r.ok) expect(r.reason).toBe('malformed');
    },
  );

  it('rejects unknown zones', () => {
    expect(isTimeZone('Mars/Olympus_Mons')).toBe(false);
    expect(isTimeZone('')).toBe(false);
    const r = zonedToUtc('2026-07-01T10:00', 'Mars/Olympus_Mons');
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.reason).toBe('unknown-zone');
  });

  it('lists UTC first and knows the common zones', () => {
    const zones = timeZones();
    expect(zones[0]).toBe('UTC');
    expect(zones).toContain('Europe/London');
    expect(zones).toContain('America/New_York');
    expect(new Set(zones).size).toBe(zones.length);
  });

  it('offers current tz database names where the runtime lists an older one', () => {
    const zones = timeZones();
    expect(zones).toContain('Asia/Kolkata');
    expect(zones).toContain('Europe/Kyiv');
    expect(zones).not.toContain('Asia/Calcutta');
    // Both names give the same offset: India is UTC+05:30 all year (tzdata `asia`).
    expect(zonedToUtc('2026-07-15T12:00', 'Asia/Calcutta')).toEqual(zonedToUtc('2026-07-15T12:00', 'Asia/Kolkata'));
  });
});

describe('describeDuration', () => {
  it.each([
    [0, 'less than a minute'],
    [-5000, 'less than a minute'],
    [60_000, '1 minute'],
    [45 * 60_000, '45 minutes'],
    [60 * 60_000, '1 hour'],
    [(2 * 60 + 5) * 60_000, '2 hours 5 minutes'],
    [(26 * 60 + 30) * 60_000, '1 day 2 hours'],
    [3 * 24 * 60 * 60_000, '3 days'],
  ])('%d ms is "%s"', (ms, text) => {
    expect(describeDuration(ms)).toBe(text);
  });
});
