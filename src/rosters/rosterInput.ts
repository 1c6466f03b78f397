import { parse } from 'csv-parse/sync';
import { z } from 'zod';
import { canonicalEmail } from './rosterRepo.ts';
import type { RosterRowError } from './errors.ts';

/** Limits of a roster and its import (the request body limit, 512 kB, bounds a paste first). */
export const ROSTER_LIMITS = Object.freeze({ nameMax: 120, memberNameMax: 120, members: 20_000, csvMaxChars: 500_000 });

// Control characters (C0, DEL, C1) and the Unicode line and paragraph separators: never in a name
// or an address, so neither can break a mail header or a CSV line.
// eslint-disable-next-line no-control-regex -- matching control characters is the point
const CONTROL = /[\u0000-\u001f\u007f-\u009f\u2028\u2029]/u;

export const rosterNameSchema = z
  .string()
  .trim()
  .min(1, 'Name the roster, such as “Rowing club members 2027”.')
  .max(ROSTER_LIMITS.nameMax, `Keep the roster name to ${ROSTER_LIMITS.nameMax} characters or fewer.`)
  .refine((s) => !CONTROL.test(s), 'The name cannot hold control characters or line breaks.');

/** An address as entered (trimmed, case kept for the mail); duplicates are found by canonicalEmail. */
export const memberEmailSchema = z
  .string()
  .trim()
  .min(1, 'Enter an email address.')
  .max(254, 'That email address is too long (254 characters at most).')
  .refine((s) => !CONTROL.test(s), 'An email address cannot hold control characters or line breaks.')
  .pipe(z.email({ message: 'That is not an email address like name@example.org.' }));

/** An optional display name: empty means none. */
export const memberNameSchema = z
  .string()
  .trim()
  .max(ROSTER_LIMITS.memberNameMax, `Keep the name to ${ROSTER_LIMITS.memberNameMax} characters or fewer.`)
  .refine((s) => !CONTROL.test(s), 'A name cannot hold control characters or line breaks.')
  .transform((s) => (s === '' ? null : s));

export interface ParsedMember {
  line: number;
  email: string;
  displayName: string | null;
}

const EMAIL_HEADERS = new Set(['email', 'e-mail', 'email address', 'e-mail address', 'address', 'mail']);
const NAME_HEADERS = new Set(['name', 'display name', 'full name']);

/**
 * A CSV of members (RFC 4180, read by csv-parse): one member per row, the address first and an
 * optional name second. A header row is optional: a first row whose cells name the columns
 * ("email", "name", in any order) is taken as one. Blank lines are skipped. Every bad row is
 * listed by its line; duplicates are compared trimmed and case-insensitively, within the file
 * and against `existing` (canonical addresses already on the roster).
 */
export function parseRosterCsv(text: string, existing: ReadonlySet<string>): { members: ParsedMember[]; errors: RosterRowError[] } {
  if (text.length > ROSTER_LIMITS.csvMaxChars) {
    return {
      members: [],
      errors: [{ line: 1, message: `The file is too large: at most ${ROSTER_LIMITS.csvMaxChars.toLocaleString('en')} characters per import.` }],
    };
  }
  let records: { record: string[]; info: { lines: number } }[];
  try {
    records = parse(text, { info: true, relax_column_count: true, skip_empty_lines: true, bom: true, trim: true }) as unknown as typeof records;
  } catch (e) {
    const line = typeof (e as { lines?: unknown }).lines === 'number' ? (e as { lines: number }).lines : 1;
    return { members: [], errors: [{ line, message: 'This line is not valid CSV: check its quotation marks ("). Nothing after it could be read.' }] };
  }
  if (records.length === 0) return { members: [], errors: [{ line: 1, message: 'The file has no rows. Put one address per line.' }] };

  let emailCol = 0;
  let nameCol: number | null = 1;
  const first = records[0]!.record.map((c) => c.trim().toLowerCase());
  if (first.some((c) => EMAIL_HEADERS.has(c))) {
    emailCol = first.findIndex((c) => EMAIL_HEADERS.has(c));
    const n = first.findIndex((c) => NAME_HEADERS.has(c));
    nameCol = n >= 0 ? n : null;
    records = records.slice(1);
  }

  const members: ParsedMember[] = [];
  const errors: RosterRowError[] = [];
  const seen = new Map<string, number>();
  for (const { record, info } of records) {
    const line = info.lines;
    if (record.every((c) => c.trim() === '')) continue;
    const email = memberEmailSchema.safeParse(record[emailCol] ?? '');
    if (!email.success) {
      errors.push({ line, message: email.error.issues[0]!.message });
      continue;
    }
    const name = memberNameSchema.safeParse(nameCol === null ? '' : (record[nameCol] ?? ''));
    if (!name.success) {
      errors.push({ line, message: name.error.issues[0]!.message });
      continue;
    }
    const key = canonicalEmail(email.data);
    const earlier = seen.get(key);
    if (earlier !== undefined) {
      errors.push({ line, message: `${email.data} is already on line ${earlier} of this file (addresses are compared ignoring case).` });
      continue;
    }
    seen.set(key, line);
    if (existing.has(key)) {
      errors.push({ line, message: `${email.data} is already on this roster.` });
      continue;
    }
    members.push({ line, email: email.data, displayName: name.data });
  }
  if (members.length === 0 && errors.length === 0) errors.push({ line: 1, message: 'The file has a header row but no members.' });
  return { members, errors };
}
