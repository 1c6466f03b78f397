import { z } from 'zod';

/**
 * Values that become mail headers, checked before the library builds the headers. Nodemailer
 * encodes display names and subjects (RFC 2047) and never lets a value end a header line; these
 * checks keep control characters out in the first place, so a display name from an imported
 * roster cannot add a header or a recipient (CWE-93).
 */
// eslint-disable-next-line no-control-regex -- control characters are exactly what this removes
const CONTROL = /[\u0000-\u001f\u007f-\u009f\u2028\u2029]+/g;

export const headerText = (value: string, max: number): string => value.replace(CONTROL, ' ').replace(/\s+/g, ' ').trim().slice(0, max);

export const mailAddress = z.email({ error: 'must be an e-mail address' }).max(254);

/** `MAIL_FROM`: an address, or `Name <address>`. */
export function parseSender(text: string): { name: string; address: string } | null {
  const m = /^\s*(?:(.*?)\s*<([^<>\s]+)>|([^<>\s]+))\s*$/.exec(text);
  if (!m) return null;
  const address = m[2] ?? m[3] ?? '';
  if (!mailAddress.safeParse(address).success) return null;
  const name = headerText((m[1] ?? '').replace(/^"(.*)"$/, '$1'), 100);
  return { name, address };
}
