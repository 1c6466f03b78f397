import type { Request, RequestHandler } from 'express';
import { demoLoginRetired } from '../../../accounts/demoOrganiser.ts';
import { getOrganiser } from '../../../accounts/organisers.ts';
import type { AppDeps } from '../../deps.ts';

export const SIGN_IN_PATH = '/organise/sign-in';
export const FIRST_RUN_PATH = '/organise/first-run';

const SAFE_NEXT = /^\/organise(\/[A-Za-z0-9_-]{1,64}){0,4}$/;

/**
 * Where to go after signing in: only a path inside the organiser area, with no scheme, host,
 * query, "//" or backslash, so the parameter cannot send anyone to another site
 * (OWASP Unvalidated Redirects and Forwards Cheat Sheet).
 */
export function safeNext(value: unknown): string | null {
  if (typeof value !== 'string' || !SAFE_NEXT.test(value)) return null;
  if (value === SIGN_IN_PATH || value === FIRST_RUN_PATH || value === '/organise/sign-out') return null;
  return value;
}

export function signInUrl(wanted: string | null): string {
  return wanted ? `${SIGN_IN_PATH}?next=${encodeURIComponent(wanted)}` : SIGN_IN_PATH;
}

/** Everything under /organise except sign-in and first run needs a signed-in organiser who still exists. */
export function requireOrganiser(deps: AppDeps): RequestHandler {
  return async (req, res, next) => {
    const id = req.session?.organiserId;
    const found = id ? await getOrganiser(deps.ctx, id) : null;
    const organiser = found && !(await demoLoginRetired(deps.ctx.knex, found)) ? found : null;
    if (!organiser) {
      // 303 See Other (RFC 9110 §15.4.4) so any method continues as a GET of the sign-in page.
      const wanted = req.method === 'GET' ? safeNext(req.originalUrl.split('?')[0]) : null;
      return res.redirect(303, signInUrl(wanted));
    }
    res.locals.organiser = organiser;
    res.locals.demoOrganiser = organiser.demo;
    next();
  };
}

/**
 * Starts a signed-in session on a fresh id (OWASP ASVS 5.0 §7.2: a new session token at
 * authentication, against session fixation) and records when, for the absolute timeout.
 */
export function startSession(req: Request, organiserId: string, now: Date, demo = false): Promise<void> {
  return new Promise((resolve, reject) => {
    req.session.regenerate((err) => {
      if (err) return reject(err);
      req.session.organiserId = organiserId;
      req.session.startedAt = now.getTime();
      if (demo) req.session.demo = true;
      req.session.save((e) => (e ? reject(e) : resolve()));
    });
  });
}

export function endSession(req: Request): Promise<void> {
  return new Promise((resolve, reject) => req.session.destroy((err) => (err ? reject(err) : resolve())));
}

export function organiserOf(res: { locals: Record<string, unknown> }): { id: string; email: string } {
  return res.locals.organiser as { id: string; email: string };
}
