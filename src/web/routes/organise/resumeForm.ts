import { Router, type Request } from 'express';
import { z } from 'zod';
import { SignInFailed } from '../../../accounts/errors.ts';
import { signIn } from '../../../accounts/signIn.ts';
import { isUuid } from '../../../custody/index.ts';
import type { AppDeps } from '../../deps.ts';
import { CsrfRejected } from '../../errors.ts';
import type { Recovery } from '../../middleware/errorHandler.ts';
import { startSession } from './auth.ts';

/**
 * An organiser who spends more than the idle limit (30 minutes, OWASP ASVS 5.0 §7.3) on the
 * election form is signed out, and the Save then fails its CSRF check. Instead of losing the
 * form, we show a sign-in box that carries every field back (never the passphrase, which is
 * never echoed), and after sign-in one button re-opens the form exactly as it was.
 * The form re-opens through the guidance route, which stores nothing, so nothing is saved
 * without the organiser seeing it first.
 */
const FORM_PATH = /^\/organise\/elections\/([^/]+)\/(edit|guidance)$|^\/organise\/elections\/(new)$/i;
const NEVER_CARRIED = new Set(['_csrf', 'passphrase', 'passphraseAgain', 'password', 'email', 'intent', 'resumeTo']);
const FIELD_NAME = /^[A-Za-z][A-Za-z0-9_]{0,40}$/;
const MAX_FIELDS = 1200;

export interface CarriedField {
  name: string;
  value: string;
}

function carriedFields(body: unknown): CarriedField[] {
  const out: CarriedField[] = [];
  if (!body || typeof body !== 'object') return out;
  for (const [name, raw] of Object.entries(body as Record<string, unknown>)) {
    if (NEVER_CARRIED.has(name) || !FIELD_NAME.test(name)) continue;
    for (const value of Array.isArray(raw) ? raw : [raw]) {
      if (typeof value === 'string' && value.length <= 20_000 && out.length < MAX_FIELDS) out.push({ name, value });
    }
  }
  return out;
}

function resumeTarget(path: string): string | null {
  const m = FORM_PATH.exec(path);
  if (!m) return null;
  const id = m[1] ?? m[3]!;
  if (id.toLowerCase() !== 'new' && !isUuid(id)) return null;
  return `/organise/elections/${id.toLowerCase()}/guidance`;
}

export const resumeOrganiserForm: Recovery = (err: unknown, req: Request) => {
  if (!(err instanceof CsrfRejected) || req.method !== 'POST') return null;
  // Still signed in: the token was wrong, not expired. That is the plain refusal.
  if (req.session?.organiserId) return null;
  const resumeTo = resumeTarget(req.path);
  if (!resumeTo) return null;
  return {
    status: 403,
    view: 'organise/resume-sign-in',
    locals: { title: 'Sign in again to keep your changes', resumeTo, fields: carriedFields(req.body), email: '', problem: null },
  };
};

const resumeSchema = z.object({
  email: z.string().max(254).catch(''),
  password: z.string().max(1024).catch(''),
  // Missing or repeated (an array): no known form to go back to, so plain sign-in.
  resumeTo: z.string().max(200).catch(''),
});

export function resumeRoutes(deps: AppDeps): Router {
  const router = Router();
  const attempts = deps.limits.signInAttempts;

  router.post('/organise/sign-in/resume', attempts, async (req, res) => {
    const form = resumeSchema.parse(req.body ?? {});
    const resumeTo = resumeTarget(form.resumeTo);
    if (!resumeTo) return res.redirect(303, '/organise/sign-in');
    const fields = carriedFields(req.body);
    try {
      const { organiserId } = await signIn(deps.ctx, { email: form.email, password: form.password });
      await startSession(req, organiserId, deps.ctx.now());
    } catch (e) {
      if (!(e instanceof SignInFailed)) throw e;
      return res.status(401).render('organise/resume-sign-in', {
        title: 'Sign in again to keep your changes',
        resumeTo,
        fields,
        email: form.email,
        problem: e.message,
      });
    }
    res.set('Cache-Control', 'no-store').render('organise/resume-continue', { title: 'You are signed in again', resumeTo, fields });
  });

  return router;
}
