/**
 * Dates as members read them: in the election's own time zone (an IANA name), with the
 * zone named, so "closes at 18:00" means the same to everyone (common practice).
 */
export interface ShownTime {
  /** For <time datetime="...">: ISO 8601 in UTC. */
  iso: string;
  /** For people: e.g. "Saturday 6 June 2026 at 18:00 (Europe/London)". */
  text: string;
}

// Building an Intl.DateTimeFormat costs far more than formatting with one (it showed in the
// profile of every member page), so each zone's formatter is made once. Zones are a bounded set.
const formatters = new Map<string, { format: Intl.DateTimeFormat; zone: string }>();

function formatter(timeZone: string): { format: Intl.DateTimeFormat; zone: string } {
  let f = formatters.get(timeZone);
  if (!f) {
    let format: Intl.DateTimeFormat;
    try {
      format = new Intl.DateTimeFormat('en-GB', { dateStyle: 'full', timeStyle: 'short', timeZone });
    } catch {
      // A zone the runtime does not know is shown in UTC rather than failing the page.
      format = new Intl.DateTimeFormat('en-GB', { dateStyle: 'full', timeStyle: 'short', timeZone: 'UTC' });
    }
    f = { format, zone: format.resolvedOptions().timeZone };
    formatters.set(timeZone, f);
  }
  return f;
}

/**
 * Public times go to the minute, never finer: seconds of a step such as the draw would hint at
 * how long it took, and its duration depends on turnout.
 */
export function shownTime(at: Date, timeZone: string): ShownTime {
  const f = formatter(timeZone);
  const minute = new Date(Math.floor(at.getTime() / 60_000) * 60_000);
  return { iso: minute.toISOString(), text: `${f.format.format(minute)} (${f.zone})` };
}
