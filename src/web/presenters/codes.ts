import QRCode from 'qrcode';
import type { Election } from '../../elections/electionRepo.ts';
import { shortRefOf } from '../../elections/shortRef.ts';
import { describeInstant } from '../../elections/timeText.ts';

/** Where members vote; printed on slips and in the CSV. */
export const ballotUrl = (publicUrl: string, electionId: string): string => `${publicUrl}/vote/${electionId}`;

/** A ballot address short enough to type from paper: /v/ and 8 symbols (see elections/shortRef.ts). */
export const shortBallotUrl = (publicUrl: string, electionId: string): string => `${publicUrl}/v/${shortRefOf(electionId)}`;

/**
 * The QR code printed on each slip: the ballot address only, never the ballot code, so a
 * photo of the QR code votes for nobody. A PNG data URL, shown through an escaped <img src>
 * (the CSP allows data: images; no inline script, no unescaped markup). Error correction M
 * (about 15% of the symbol can be damaged, ISO/IEC 18004) is the library's default.
 */
export async function ballotQrDataUrl(url: string): Promise<string> {
  return QRCode.toDataURL(url, { errorCorrectionLevel: 'M', margin: 4, scale: 4 });
}

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
  /** The short address to type, e.g. https://example.org/v/7k3m9q2x. */
  shortUrl: string;
  /** PNG data URL of a QR code of `url`; null where the view has no QR code (the on-screen list). */
  qr: string | null;
  opens: string;
  closes: string;
  /** Printed from a draft: the opening time is a plan the organiser can bring forward with "Open now". */
  openingPlanned: boolean;
  codes: string[];
}

export function slipsView(
  e: Pick<Election, 'id' | 'title' | 'opensAt' | 'closesAt' | 'timeZone' | 'state'>,
  publicUrl: string,
  codes: string[],
  qr: string | null = null,
): SlipsView {
  return {
    title: e.title,
    url: ballotUrl(publicUrl, e.id),
    shortUrl: shortBallotUrl(publicUrl, e.id),
    qr,
    opens: describeInstant(e.opensAt, e.timeZone),
    closes: describeInstant(e.closesAt, e.timeZone),
    openingPlanned: e.state === 'draft',
    codes,
  };
}
