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
  changing: z.literal('yes').optional().catch(undefined),
});

/**
 * A member who leaves a step open past the session's idle limit loses the CSRF token, not the
 * ballot: instead of a dead end, show what they had with a fresh token and one button to carry on.
 * A cast is resumed at the confirmation step, so nothing is cast without the member seeing it again.
 * Re-posting what the browser itself sent gives a forger nothing: casting needs the code.
 */
export const resumeExpiredVote: Recovery = (err: unknown, req: Request) => {
  if (!(err instanceof CsrfRejected) || req.method !== 'POST') return null;
  const match = STEP.exec(req.path);
  if (!match) return null;
  const form = carried.parse(req.body ?? {});
  const approvals = form.approve === undefined ? [] : Array.isArray(form.approve) ? form.approve : [form.approve];
  const [, id, step] = match;
  return {
    status: 403,
    view: 'vote/resume',
    locals: {
      title: 'This page had expired',
      action: `/vote/${id}/${step === 'cast' ? 'confirm' : step}`,
      code: form.code,
      approvals,
      changing: form.changing ?? null,
      wasCasting: step === 'cast',
    },
  };
};
