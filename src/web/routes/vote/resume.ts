import type { Request } from 'express';
import { z } from 'zod';
import { CsrfRejected } from '../../errors.ts';
import type { Recovery } from '../../middleware/errorHandler.ts';

const STEP = /^\/vote\/([0-9a-f-]{36})\/(ballot|confirm|cast)$/i;

const carried = z.object({
  code: z.string().max(200).catch(''),
  approve: z
    .union([z.string().regex(/^\d{1,3}$/), z.array(z.string().regex(/^\d{1,3}$/)).max(100)])
    .optional()
    .catch(undefined),
});

/**
 * A member who leaves a step open past the form token's life loses the token, not the ballot:
 * instead of a dead end, show what they had sent with a fresh token and one button to carry on.
 * Each step's form carries only its own input (the code at the code step, the ticks at the ballot
 * step); the rest is in the step cookie. A cast is resumed at the read-back (a plain GET), so
 * nothing is cast without the member seeing it again. Re-posting what the browser itself sent
 * gives a forger nothing: the code is typed by the member, the ticks need the member's cookie.
 */
export const resumeExpiredVote: Recovery = (err: unknown, req: Request) => {
  if (!(err instanceof CsrfRejected) || req.method !== 'POST') return null;
  const match = STEP.exec(req.path);
  if (!match) return null;
  const [, id, step] = match;
  const form = carried.parse(req.body ?? {});
  const approvals = step !== 'confirm' || form.approve === undefined ? [] : Array.isArray(form.approve) ? form.approve : [form.approve];
  return {
    status: 403,
    view: 'vote/resume',
    locals: {
      title: 'This page had expired',
      action: `/vote/${id}/${step === 'cast' ? 'confirm' : step}`,
      code: step === 'ballot' ? form.code : '',
      approvals,
      wasCasting: step === 'cast',
    },
  };
};
