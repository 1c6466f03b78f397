/**
 * Wall-clock times in an IANA time zone, converted to and from UTC with Intl only (no tz library):
 * the runtime's ICU carries the tz database.
 *
 * Rule for daylight-saving changes (documented for organisers on the election form):
 * - a time that does not exist (clocks jump forward over it) is refused with a message naming the gap;
 * - a time that happens twice (clocks go back) means its first occurrence, the earlier instant.
 */

const WALL = /^(\d{4})-(\d{2})-(\d{2})[T ](\d{2}):(\d{2})$/;
const DAY_MS = 24 * 60 * 60 * 1000;

export interface WallClock {
  year: number;
  month: number;
  day: number;
  hour: number;
  minute: number;
}

export type ZonedResult = { ok: true; utc: Date; ambiguous: boolean } | { ok: false; reason: 'malformed' | 'unknown-zone' | 'gap'; message: string };

const formatters = new Map<string, Intl.DateTimeFormat>();

function formatter(zone: string): Intl.DateTimeFormat {
  let f = formatters.get(zone);
  if (!f) {
    f = new Intl.DateTimeFormat('en-GB', {
      timeZone: zone,
      hourCycle: 'h23',
      year: 'numeric',
      month: '2-digit',
      day: '2-digit',
      hour: '2-digit',
      minute: '2-digit',
      second: '2-digit',
    });
    formatters.set(zone, f);
  }
  return f;
}

/**
 * ICU lists some zones under names the tz database has since replaced (its `backward` file keeps
 * the old ones as links). Organisers look for the current names. From memory; each is used only
 * if the runtime accepts it.
 */
const CURRENT_NAMES: Readonly<Record<string, string>> = {
  'Asia/Calcutta': 'Asia/Kolkata',
  'Asia/Katmandu': 'Asia/Kathmandu',
  'Asia/Rangoon': 'Asia/Yangon',
  'Asia/Saigon': 'Asia/Ho_Chi_Minh',
  'Atlantic/Faeroe': 'Atlantic/Faroe',
  'Europe/Kiev': 'Europe/Kyiv',
  'America/Godthab': 'America/Nuuk',
  'Pacific/Enderbury': 'Pacific/Kanton',
  'Pacific/Ponape': 'Pacific/Pohnpei',
  'Pacific/Truk': 'Pacific/Chuuk',
};

/** Every zone the runtime knows under its current name, plus UTC (which Intl.supportedValuesOf leaves out). */
export function timeZones(): string[] {
  const names = Intl.supportedValuesOf('timeZone')
    .filter((z) => z !== 'UTC')
    .map((z) => (CURRENT_NAMES[z] && isTimeZone(CURRENT_NAMES[z]) ? CURRENT_NAMES[z] : z));
  return ['UTC', ...[...new Set(names)].sort((a, b) => a.localeCompare(b, 'en'))];
}

export function isTimeZone(zone: string): boolean {
  if (typeof zone !== 'string' || zone.length === 0 || zone.length > 64) return false;
  try {
    formatter(zone);
    return true;
  } catch {
    return false;
  }
}

/** The wall clock shown in `zone` at `instant` (seconds dropped). */
export function wallClockAt(instant: Date, zone: string): WallClock {
  const parts = Object.fromEntries(
    formatter(zone)
      .formatToParts(instant)
      .map((p) => [p.type, p.value]),
  );
  return {
    year: Number(parts.year),
    month: Number(parts.month),
    day: Number(parts.day),
    hour: Number(parts.hour),
    minute: Number(parts.minute),
  };
}

/** Offset of `zone` from UTC at `instant`, in minutes (east positive). */
export function offsetMinutesAt(instant: Date, zone: string): number {
  const w = wallClockAt(instant, zone);
  const asUtc = Date.UTC(w.year, w.month - 1, w.day, w.hour, w.minute);
  const whole = Math.floor(instant.getTime() / 60_000) * 60_000;
  return Math.round((asUtc - whole) / 60_000);
}

export function parseWallClock(text: string): WallClock | null {
  const m = WALL.exec(typeof text === 'string' ? text.trim() : '');
  if (!m) return null;
  const [year, month, day, hour, minute] = m.slice(1).map(Number) as [number, number, number, number, number];
  const check = new Date(Date.UTC(year, month - 1, day, hour, minute));
  // Rejects 2026-02-30 and 24:00: Date.UTC would silently roll them over.
  if (check.getUTCMonth() !== month - 1 || check.getUTCDate() !== day || hour > 23 || minute > 59) return null;
  if (year < 2000 || year > 2999) return null;
  return { year, month, day, hour, minute };
}

const pad = (n: number, w = 2): string => String(n).padStart(w, '0');

/** "YYYY-MM-DDTHH:mm", the value of an <input type="datetime-local">. */
export function formatWallClock(w: WallClock): string {
  return `${pad(w.year, 4)}-${pad(w.month)}-${pad(w.day)}T${pad(w.hour)}:${pad(w.minute)}`;
}

const sameWall = (a: WallClock, b: WallClock): boolean =>
  a.year === b.year && a.month === b.month && a.day === b.day && a.hour === b.hour && a.minute === b.minute;

/**
 * The UTC instant at which `zone`'s clocks show `text` ("YYYY-MM-DDTHH:mm").
 * Candidates use the offsets in force a day before and a day after, which covers every
 * instant at most one transition away (tz zones change offset at most once a day).
 */
export function zonedToUtc(text: string, zone: string): ZonedResult {
  if (!isTimeZone(zone)) return { ok: false, reason: 'unknown-zone', message: 'Choose a time zone from the list.' };
  const wall = parseWallClock(text);
  if (!wall) {
    return { ok: false, reason: 'malformed', message: 'Enter a date and time, for example 2026-05-14T18:30.' };
  }
  const naive = Date.UTC(wall.year, wall.month - 1, wall.day, wall.hour, wall.minute);
  const offsets = new Set([offsetMinutesAt(new Date(naive - DAY_MS), zone), offsetMinutesAt(new Date(naive + DAY_MS), zone)]);
  const matches = [...offsets]
    .map((o) => naive - o * 60_000)
    .filter((t) => sameWall(wallClockAt(new Date(t), zone), wall))
    .sort((a, b) => a - b);
  if (matches.length === 0) {
    return {
      ok: false,
      reason: 'gap',
      message: `${formatWallClock(wall).replace('T', ' ')} does not exist in ${zone}: the clocks jump forward over it. Choose a time just before or after the jump.`,
    };
  }
  return { ok: true, utc: new Date(matches[0]!), ambiguous: matches.length > 1 };
}

/** "YYYY-MM-DDTHH:mm" in `zone`, for re-filling a form from a stored instant. */
export function utcToWallClockText(instant: Date, zone: string): string {
  return formatWallClock(wallClockAt(instant, zone));
}
