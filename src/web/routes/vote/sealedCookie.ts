import type { Request, Response } from 'express';
import { hmacSha256, isUuid, openForElection, sealForElection } from '../../../custody/index.ts';
import type { RandomBytes } from '../../../elections/context.ts';
import { cookieValue } from '../../middleware/sessions.ts';

/**
 * A short-lived cookie whose value only this server can read or make: the text and its expiry are
 * sealed with XChaCha20-Poly1305 (custody/sealed.ts) under a key derived from the session secret
 * with the cookie's own label, and with the election id as associated data, so a cookie made for
 * one election, or changed by one bit, does not open for another. HttpOnly, SameSite=Lax, Secure
 * on an https site, and scoped to a path under the election's ballot address. The expiry is inside
 * the sealed value, so a browser that keeps the cookie past its max age gains nothing.
 * Hand-written over a signed-cookie library because the value must be secret, not only signed.
 */
export interface SealedCookieSpec {
  /** Key label, distinct per cookie (domain separation). */
  label: string;
  /** Name on plain http; on https it gets the __Secure- prefix. */
  name: string;
  path(electionId: string): string;
  maxAgeMs: number;
}

export interface SealedCookie {
  readonly name: string;
  path(electionId: string): string;
  /** Seals `text`; maxAgeMs overrides the spec's for this value. */
  set(res: Response, electionId: string, text: string, now: Date, maxAgeMs?: number): void;
  /** The text, or null when absent, tampered with, made for another election or expired. */
  read(req: Request, electionId: string, now: Date): string | null;
  clear(res: Response, electionId: string): void;
}

const RAW = /^[A-Za-z0-9_-]{1,3800}$/;

export function sealedCookie(sessionSecret: string, secure: boolean, random: RandomBytes, spec: SealedCookieSpec): SealedCookie {
  const key = hmacSha256(Buffer.from(sessionSecret, 'utf8'), Buffer.from(spec.label, 'utf8'));
  const name = secure ? `__Secure-${spec.name}` : spec.name;
  const options = (electionId: string) => ({ httpOnly: true, secure, sameSite: 'lax' as const, path: spec.path(electionId) });
  return {
    name,
    path: spec.path,
    set(res, electionId, text, now, maxAgeMs = spec.maxAgeMs) {
      const expires = now.getTime() + maxAgeMs;
      const value = sealForElection(key, electionId, `${text}.${expires}`, random).toString('base64url');
      res.cookie(name, value, { ...options(electionId), maxAge: maxAgeMs });
    },
    read(req, electionId, now) {
      // An address that names no election (typed, or fuzzed) opens nothing; the route then answers "not found".
      if (!isUuid(electionId)) return null;
      const raw = cookieValue(req.headers.cookie, name);
      if (!raw || !RAW.test(raw)) return null;
      const opened = openForElection(key, electionId, Buffer.from(raw, 'base64url'));
      const dot = opened ? opened.lastIndexOf('.') : -1;
      if (!opened || dot < 0) return null;
      const expires = opened.slice(dot + 1);
      if (!/^\d{1,16}$/.test(expires) || Number(expires) <= now.getTime()) return null;
      return opened.slice(0, dot);
    },
    clear(res, electionId) {
      res.clearCookie(name, options(electionId));
    },
  };
}
