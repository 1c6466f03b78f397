import crypto from 'node:crypto';
import session from 'express-session';
import type { Request, RequestHandler } from 'express';
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
 * CSRF tokens (OWASP CSRF Prevention Cheat Sheet). Three kinds, and each route takes exactly one:
 *
 * - Signed in: the synchroniser token kept in the session (csrf-sync). Nothing else is accepted, so
 *   a token an attacker fetched for themselves, with its cookie planted in the victim's browser (from
 *   a sibling subdomain, or on the path over plain http), cannot act in a victim's session.
 * - Not signed in, in the organiser area (sign-in, first run, sign-in to keep a form): a signed
 *   double-submit token bound to the client's address as well, HMAC-SHA-256(session secret,
 *   nonce, address). These forms decide whose account a browser is signed in to ("login CSRF"):
 *   a nonce and token fetched from the attacker's address do not verify from the victim's, even
 *   with the nonce cookie planted. The cheat sheet's other answer, a pre-session, would write a
 *   session row for every view of the sign-in page, and a planted session cookie defeats it alike.
 * - Not signed in, member forms (the code box, the ballot steps, the receipt check): the signed
 *   double-submit token, HMAC-SHA-256(session secret, nonce), not bound to an address, since a
 *   member's address may change between steps; a forged member post can only use codes the
 *   attacker already holds. It needs no stored session, so members write no session row.
 *
 * Over https the nonce lives in a `__Host-` cookie, which neither a sibling subdomain nor a plain
 * http response can set (RFC 6265bis, cookie name prefixes). Over plain http anyone on the path can set any
 * cookie, the session's included; the threat model in the README says so.
 */
const ANON_PREFIX = 'a.';
const SIGN_IN_PREFIX = 'o.';
const NONCE = /^[A-Za-z0-9_-]{43}$/;
/** Posts that take the member token; every other anonymous post takes the address-bound one. */
const MEMBER_POST = /^\/(?:ballot|vote|results)(?:\/|$)/i;
/** Pages whose forms sign someone in. Any other anonymous page's forms are member forms. */
const ORGANISER_PAGE = /^\/organise(?:\/|$)/i;

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

function signInToken(secret: string, nonce: string, address: string): string {
  return SIGN_IN_PREFIX + crypto.createHmac('sha256', secret).update(`veiltally sign-in csrf ${nonce} ${address}`).digest('base64url');
}

/** The client's address as Express reads it (forwarded only from TRUST_PROXY's proxies). */
function addressOf(req: Request): string {
  return req.ip ?? req.socket.remoteAddress ?? '';
}

function sameToken(expected: string, given: string): boolean {
  const a = Buffer.from(expected);
  const b = Buffer.from(given);
  return a.length === b.length && crypto.timingSafeEqual(a, b);
}

/** Synchroniser-token or signed double-submit check on every state-changing request. */
export function csrfProtection(deps: AppDeps): RequestHandler {
  const cookieName = csrfCookieName(isSecureSite(deps.config.publicUrl));
  return (req, res, next) => {
    if (req.method === 'GET' || req.method === 'HEAD' || req.method === 'OPTIONS') return next();
    // Signed in: the session's own token only, never an anonymous one.
    if (req.session?.organiserId) return csrf.csrfSynchronisedProtection(req, res, next);
    const body = req.body as Record<string, unknown> | undefined;
    const token = typeof body?._csrf === 'string' ? body._csrf : undefined;
    const nonce = cookieValue(req.headers.cookie, cookieName);
    if (!token || !nonce || !NONCE.test(nonce)) return next(new CsrfRejected());
    const expected = MEMBER_POST.test(req.path) ? anonymousToken(deps.sessionSecret, nonce) : signInToken(deps.sessionSecret, nonce, addressOf(req));
    return sameToken(expected, token) ? next() : next(new CsrfRejected());
  };
}

/** Views call csrf() only where they render a form; anonymous visitors get a cookie, never a session row. */
export function csrfLocals(deps: AppDeps): RequestHandler {
  const secure = isSecureSite(deps.config.publicUrl);
  const cookieName = csrfCookieName(secure);
  return (req, res, next) => {
    const organiserPage = ORGANISER_PAGE.test(req.path);
    const made: { member?: string; signIn?: string } = {};
    let nonce: string | undefined;
    // A view passes 'sign-in' for a form that posts to the organiser area from another page (the home
    // page's sample-elections button); otherwise the page's own area decides.
    res.locals.csrf = (kind?: 'sign-in') => {
      if (req.session?.organiserId) return csrf.generateToken(req);
      const signIn = kind === 'sign-in' || organiserPage;
      const cached = signIn ? made.signIn : made.member;
      if (cached) return cached;
      if (!nonce) {
        nonce = cookieValue(req.headers.cookie, cookieName);
        if (!nonce || !NONCE.test(nonce)) {
          nonce = crypto.randomBytes(32).toString('base64url');
          res.cookie(cookieName, nonce, { httpOnly: true, sameSite: 'lax', secure, path: '/' });
        }
      }
      if (signIn) return (made.signIn = signInToken(deps.sessionSecret, nonce, addressOf(req)));
      return (made.member = anonymousToken(deps.sessionSecret, nonce));
    };
    next();
  };
}
