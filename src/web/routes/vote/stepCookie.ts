import crypto from 'node:crypto';
import type { Request, Response } from 'express';
import { z } from 'zod';
import type { AppDeps } from '../../deps.ts';
import { IDLE_MS, isSecureSite } from '../../middleware/sessions.ts';
import { RECEIPT_COOKIE_MS } from './receiptCookie.ts';
import { sealedCookie } from './sealedCookie.ts';

/**
 * Where a member is between the voting steps, kept in ONE sealed cookie (sealedCookie.ts) scoped
 * to /vote/<id>, so every step can answer its POST with a redirect to a GET (post/redirect/get):
 * Back and Reload then never resend a form. The code, the ticks and the one-time cast token live
 * only there: never in a hidden field, a URL, the session table or a log.
 *
 * - ticks: the ticks of a member whose cookie had lapsed when they sent them; the code is asked again.
 * - ballot: the code is checked; the ballot is shown (with any ticks kept).
 * - confirm: the ticks are read back; `token` is the cast token for exactly these ticks.
 * - cast: the ballot was cast; nothing secret is kept, so Back lands on "already cast".
 */
const position = z.number().int().min(0).max(9999);
const ticks = z.array(position).max(100);
// Sealed by this server, so only checked for shape; the cast normalises and checks it again.
const canonicalCode = z.string().min(1).max(40);
export const stepState = z.discriminatedUnion('step', [
  z.object({ step: z.literal('ticks'), approvals: ticks }),
  z.object({ step: z.literal('ballot'), code: canonicalCode, approvals: ticks, found: z.boolean().optional() }),
  z.object({ step: z.literal('confirm'), code: canonicalCode, approvals: ticks, token: z.string().regex(/^[A-Za-z0-9_-]{43}$/) }),
  z.object({ step: z.literal('cast') }),
]);
export type StepState = z.infer<typeof stepState>;

/** The member idle limit (as for sessions, OWASP ASVS 5.0 §7.3); once cast, as long as the receipt. */
export const STEP_COOKIE_MS = IDLE_MS;

export interface MemberSteps {
  readonly name: string;
  read(req: Request, electionId: string): StepState | null;
  set(res: Response, electionId: string, state: StepState): void;
  clear(res: Response, electionId: string): void;
}

export function memberSteps(deps: AppDeps): MemberSteps {
  const { ctx } = deps;
  const cookie = sealedCookie(deps.sessionSecret, isSecureSite(deps.config.publicUrl), ctx.random, {
    label: 'veiltally/vote-step-cookie/1',
    name: 'vt-vote',
    path: (electionId) => `/vote/${electionId}`,
    maxAgeMs: STEP_COOKIE_MS,
  });
  return {
    name: cookie.name,
    read(req, electionId) {
      const text = cookie.read(req, electionId, ctx.now());
      if (!text) return null;
      try {
        const parsed = stepState.safeParse(JSON.parse(text));
        return parsed.success ? parsed.data : null;
      } catch {
        return null;
      }
    },
    set(res, electionId, state) {
      cookie.set(res, electionId, JSON.stringify(state), ctx.now(), state.step === 'cast' ? RECEIPT_COOKIE_MS : STEP_COOKIE_MS);
    },
    clear: (res, electionId) => cookie.clear(res, electionId),
  };
}

/**
 * What the confirmation page's cast form carries: a short digest of the cast token, which changes
 * whenever the ticks do. A cast whose page read back other ticks than the cookie now holds (an
 * older tab, a page restored from history) goes back to the read-back instead of casting.
 * SHA-256 of 256 random bits reveals nothing of the token.
 */
export function readBackTag(token: string): string {
  return crypto.createHash('sha256').update(`veiltally/read-back/1\0${token}`).digest('base64url').slice(0, 22);
}
