import type { Request, Response } from 'express';
import { hmacSha256, openReceiptForToken, sealReceiptForToken } from '../../../custody/index.ts';
import type { RandomBytes } from '../../../elections/context.ts';

/**
 * Post/redirect/get after a cast: the receipt goes to the member's browser alone, in a short-lived
 * cookie that is encrypted (XChaCha20-Poly1305 under a key derived from the session secret),
 * HttpOnly and scoped to this election's receipt path, and the receipt page is sent no-store.
 * Reload shows it again; the receipt never appears in a URL or a log.
 */
export const RECEIPT_COOKIE_MS = 15 * 60_000;

export interface ReceiptCookie {
  name: string;
  path(electionId: string): string;
  set(res: Response, electionId: string, receipt: string, now: Date): void;
  read(req: Request, electionId: string, now: Date): string | null;
}

export function receiptCookie(sessionSecret: string, secure: boolean, random: RandomBytes): ReceiptCookie {
  const key = hmacSha256(Buffer.from(sessionSecret, 'utf8'), Buffer.from('veiltally/receipt-cookie/1', 'utf8'));
  const name = secure ? '__Secure-vt-receipt' : 'vt-receipt';
  const path = (electionId: string) => `/vote/${electionId}/receipt`;
  return {
    name,
    path,
    set(res, electionId, receipt, now) {
      const expires = now.getTime() + RECEIPT_COOKIE_MS;
      const value = sealReceiptForToken(key, electionId, `${receipt}.${expires}`, random).toString('base64url');
      res.cookie(name, value, { httpOnly: true, secure, sameSite: 'lax', path: path(electionId), maxAge: RECEIPT_COOKIE_MS });
    },
    read(req, electionId, now) {
      const raw = cookieValue(req.headers.cookie, name);
      if (!raw || !/^[A-Za-z0-9_-]{1,400}$/.test(raw)) return null;
      const opened = openReceiptForToken(key, electionId, Buffer.from(raw, 'base64url'));
      const m = opened ? /^([0-9A-Z]{10})\.(\d{1,16})$/.exec(opened) : null;
      if (!m || Number(m[2]) <= now.getTime()) return null;
      return m[1]!;
    },
  };
}

function cookieValue(header: string | undefined, name: string): string | null {
  if (!header) return null;
  for (const part of header.split(';')) {
    const eq = part.indexOf('=');
    if (eq > 0 && part.slice(0, eq).trim() === name) return part.slice(eq + 1).trim();
  }
  return null;
}
