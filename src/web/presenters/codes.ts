import type { Election } from '../../elections/electionRepo.ts';
import { describeInstant } from '../../elections/timeText.ts';

/** Where members vote; printed on slips and in the CSV. */
export const ballotUrl = (publicUrl: string, electionId: string): string => `${publicUrl}/vote/${electionId}`;

/**
 * RFC 4180 CSV: CRLF line ends, a header row, fields quoted when they hold a comma, quote or
 * line break. Codes and URLs never start with = + - @, so no spreadsheet formula can arise
 * (OWASP "CSV Injection"); a leading one would still be quoted and prefixed to be safe.
 */
export function csvField(value: string): string {
  const guarded = /^[=+\-@\t\r]/.test(value) ? `'${value}` : value;
  return /[",\r\n]/.test(guarded) || guarded !== value ? `"${guarded.replace(/"/g, '""')}"` : guarded;
}

export function codesCsv(codes: readonly string[], url: string): string {
  const lines = ['code,ballot_url'];
  const u = csvField(url);
  for (const c of codes) lines.push(`${csvField(c)},${u}`);
  return lines.join('\r\n') + '\r\n';
}

/** An ASCII file name from the title, so every browser saves it the same way. */
export function codesFileName(title: string, now: Date): string {
  const slug = title
    .normalize('NFKD')
    .replace(/\p{M}/gu, '') // accents split off by NFKD
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, '-')
    .replace(/^-+|-+$/g, '')
    .slice(0, 40)
    .replace(/-+$/, '');
  const stamp = now.toISOString().slice(0, 16).replace(/[-:]/g, '').replace('T', '-');
  return `ballot-codes-${slug || 'election'}-${stamp}.csv`;
}

export interface SlipsView {
  title: string;
  url: string;
  opens: string;
  closes: string;
  codes: string[];
}

export function slipsView(e: Pick<Election, 'title' | 'opensAt' | 'closesAt' | 'timeZone'>, url: string, codes: string[]): SlipsView {
  return { title: e.title, url, opens: describeInstant(e.opensAt, e.timeZone), closes: describeInstant(e.closesAt, e.timeZone), codes };
}
