import crypto from 'node:crypto';
import session from 'express-session';
import type { RequestHandler } from 'express';
import { csrfSync } from 'csrf-sync';
import { DatabaseSessionStore } from './sessionStore.ts';
import { CsrfRejected } from '../errors.ts';
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
    // Left undefined, express-session follows Express's 'trust proxy' (TRUST_PROXY) to decide if a request came over TLS.
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

/**
 * CSRF tokens (OWASP CSRF Prevention Cheat Sheet). Signed-in organisers get the synchroniser token,
 * kept in their session. Everyone else (members voting, checking a receipt, the sign-in form) gets a
 * signed double-submit token: a random nonce in a cookie and HMAC-SHA-256(session secret, nonce) in
 * the form. That needs no stored session, so anonymous visitors write no row to the database.
 */
const ANON_PREFIX = 'a.';
const NONCE = /^[A-Za-z0-9_-]{43}$/;

/** One cookie's value from a Cookie header (hand-written: Express parses no cookies without cookie-parser, a dependency for two reads). */
export function cookieValue(header: string | undefined, name: string): string | undefined {
  if (!header) return undefined;
  for (const part of header.split(';')) {
    const i = part.indexOf('=');
    if (i > 0 && part.slice(0, i).trim() === name) return part.slice(i + 1).trim();
  }
  return undefined;
}

function csrfCookieName(secure: boolean): string {
  return secure ? '__Host-veiltally-csrf' : 'veiltally-csrf';
}

function anonymousToken(secret: string, nonce: string): string {
  return ANON_PREFIX + crypto.createHmac('sha256', secret).update(`veiltally csrf ${nonce}`).digest('base64url');
}

/** Synchroniser-token or signed double-submit check on every state-changing request. */
export function csrfProtection(deps: AppDeps): RequestHandler {
  const cookieName = csrfCookieName(isSecureSite(deps.config.publicUrl));
  return (req, res, next) => {
    if (req.method === 'GET' || req.method === 'HEAD' || req.method === 'OPTIONS') return next();
    const body = req.body as Record<string, unknown> | undefined;
    const token = typeof body?._csrf === 'string' ? body._csrf : undefined;
    if (token?.startsWith(ANON_PREFIX)) {
      const nonce = cookieValue(req.headers.cookie, cookieName);
      const expected = nonce && NONCE.test(nonce) ? Buffer.from(anonymousToken(deps.sessionSecret, nonce)) : null;
      const given = Buffer.from(token);
      if (expected && expected.length === given.length && crypto.timingSafeEqual(expected, given)) return next();
      return next(new CsrfRejected());
    }
    return csrf.csrfSynchronisedProtection(req, res, next);
  };
}

/** Views call csrf() only where they render a form; anonymous visitors get a cookie, never a session row. */
export function csrfLocals(deps: AppDeps): RequestHandler {
  const secure = isSecureSite(deps.config.publicUrl);
  const cookieName = csrfCookieName(secure);
  return (req, res, next) => {
    let anonymous: string | undefined;
    res.locals.csrf = () => {
      if (req.session?.organiserId) return csrf.generateToken(req);
      if (anonymous) return anonymous;
      let nonce = cookieValue(req.headers.cookie, cookieName);
      if (!nonce || !NONCE.test(nonce)) {
        nonce = crypto.randomBytes(32).toString('base64url');
        res.cookie(cookieName, nonce, { httpOnly: true, sameSite: 'lax', secure, path: '/' });
      }
      anonymous = anonymousToken(deps.sessionSecret, nonce);
      return anonymous;
    };
    next();
  };
}
