import type { Request, Response } from 'express';
import type { RandomBytes } from '../../../elections/context.ts';
import { sealedCookie } from './sealedCookie.ts';

/**
 * Post/redirect/get after a cast: the receipt goes to the member's browser alone, in a short-lived
 * sealed cookie (sealedCookie.ts) scoped to this election's receipt path, and the receipt page is
 * sent no-store. Reload shows it again; the receipt never appears in a URL or a log.
 */
export const RECEIPT_COOKIE_MS = 15 * 60_000;

export interface ReceiptCookie {
  name: string;
  path(electionId: string): string;
  set(res: Response, electionId: string, receipt: string, now: Date): void;
  read(req: Request, electionId: string, now: Date): string | null;
}

export function receiptCookie(sessionSecret: string, secure: boolean, random: RandomBytes): ReceiptCookie {
  const cookie = sealedCookie(sessionSecret, secure, random, {
    label: 'veiltally/receipt-cookie/1',
    name: 'vt-receipt',
    path: (electionId) => `/vote/${electionId}/receipt`,
    maxAgeMs: RECEIPT_COOKIE_MS,
  });
  return {
    name: cookie.name,
    path: cookie.path,
    set: (res, electionId, receipt, now) => cookie.set(res, electionId, receipt, now),
    read(req, electionId, now) {
      const receipt = cookie.read(req, electionId, now);
      return receipt && /^[0-9A-Z]{10}$/.test(receipt) ? receipt : null;
    },
  };
}
