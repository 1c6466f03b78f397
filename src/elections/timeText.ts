import { offsetMinutesAt } from './time.ts';

/** Instants and durations in words, in an election's own time zone, for organiser pages. */

const pad = (n: number): string => String(n).padStart(2, '0');

/** "UTC+01:00"-style label of the offset in force, so the stored instant is unambiguous on screen. */
export function offsetLabel(instant: Date, zone: string): string {
  const o = offsetMinutesAt(instant, zone);
  const sign = o < 0 ? '−' : '+';
  const a = Math.abs(o);
  return `UTC${sign}${pad(Math.floor(a / 60))}:${pad(a % 60)}`;
}

const UTC_ZONES = new Set(['UTC', 'Etc/UTC', 'Etc/UCT', 'UCT', 'Etc/Universal', 'Universal', 'Etc/Zulu', 'Zulu']);

/** A readable date and time in the election's zone, with the offset: "Thu 14 May 2026, 18:30 (UTC+01:00, Europe/London)". */
export function describeInstant(instant: Date, zone: string): string {
  const text = new Intl.DateTimeFormat('en-GB', {
    timeZone: zone,
    weekday: 'short',
    day: 'numeric',
    month: 'short',
    year: 'numeric',
    hour: '2-digit',
    minute: '2-digit',
    hourCycle: 'h23',
  }).format(instant);
  // UTC itself has no offset to tell apart: "(UTC)", not "(UTC+00:00, UTC)".
  if (UTC_ZONES.has(zone)) return `${text} (UTC)`;
  return `${text} (${offsetLabel(instant, zone)}, ${zone})`;
}

/** "2 days 3 hours", "45 minutes": coarse, for the dashboard. Never negative. */
export function describeDuration(ms: number): string {
  const minutes = Math.max(0, Math.floor(ms / 60_000));
  const days = Math.floor(minutes / 1440);
  const hours = Math.floor((minutes % 1440) / 60);
  const mins = minutes % 60;
  const unit = (n: number, w: string) => `${n} ${w}${n === 1 ? '' : 's'}`;
  if (days > 0) return hours > 0 ? `${unit(days, 'day')} ${unit(hours, 'hour')}` : unit(days, 'day');
  if (hours > 0) return mins > 0 ? `${unit(hours, 'hour')} ${unit(mins, 'minute')}` : unit(hours, 'hour');
  return minutes > 0 ? unit(mins, 'minute') : 'less than a minute';
}

/** "1 Dec 2026, 22:47" in `zone`: for tables whose caption already names the zone. */
export function shortInstant(instant: Date, zone: string): string {
  return new Intl.DateTimeFormat('en-GB', {
    timeZone: zone,
    day: 'numeric',
    month: 'short',
    year: 'numeric',
    hour: '2-digit',
    minute: '2-digit',
    hourCycle: 'h23',
  }).format(instant);
}
