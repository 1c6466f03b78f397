import session from 'express-session';
import type { RequestHandler } from 'express';
import { csrfSync } from 'csrf-sync';
import { DatabaseSessionStore } from './sessionStore.ts';
import type { AppDeps } from '../deps.ts';

declare module 'express-session' {
  interface SessionData {
    organiserId?: string;
    /** When the session was created, for the absolute timeout. */
    startedAt?: number;
    /** Signed in as the demo's sample login: the header marks it on every page. */
    demo?: boolean;
    /** The demo login's password, kept for exactly one page view after the first-run button. */
    demoPassword?: string;
  }
}

/** OWASP ASVS 5.0 §7.3: idle timeout 30 minutes, absolute 12 hours. */
export const IDLE_MS = 30 * 60 * 1000;
export const ABSOLUTE_MS = 12 * 60 * 60 * 1000;

export function isSecureSite(publicUrl: string): boolean {
  return publicUrl.startsWith('https://');
}

export function sessionMiddleware(deps: AppDeps): RequestHandler {
  const secure = isSecureSite(deps.config.publicUrl);
  return session({
    // __Host- needs Secure, so plain-http development uses an ordinary name.
    name: secure ? '__Host-veiltally' : 'veiltally',
    secret: deps.sessionSecret,
    store: new DatabaseSessionStore(deps.ctx.knex, deps.ctx.now, IDLE_MS),
    resave: false,
    saveUninitialized: false,
    rolling: true,
    proxy: deps.config.trustProxy,
    cookie: { httpOnly: true, sameSite: 'lax', secure, path: '/', maxAge: IDLE_MS },
  });
}

/** Ends a signed-in session that has lived past the absolute limit. */
export function absoluteTimeout(now: () => Date): RequestHandler {
  return (req, _res, next) => {
    const s = req.session;
    if (s?.organiserId && s.startedAt && now().getTime() - s.startedAt > ABSOLUTE_MS) {
      return s.regenerate((err) => next(err));
    }
    next();
  };
}

const csrf = csrfSync({
  getTokenFromRequest: (req) => {
    const body = req.body as Record<string, unknown> | undefined;
    return typeof body?._csrf === 'string' ? body._csrf : undefined;
  },
});

/** Synchroniser-token CSRF check on every state-changing request (OWASP CSRF Prevention Cheat Sheet). */
export const csrfProtection: RequestHandler = csrf.csrfSynchronisedProtection;

/** Views call csrf() only where they render a form, so read-only visitors get no session. */
export const csrfLocals: RequestHandler = (req, res, next) => {
  res.locals.csrf = () => csrf.generateToken(req);
  next();
};
