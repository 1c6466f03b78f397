import type { RequestHandler } from 'express';
import { UnreadableRequest } from '../errors.ts';

function holdsNul(value: unknown): boolean {
  if (typeof value === 'string') return value.includes('\u0000');
  if (Array.isArray(value)) return value.some(holdsNul);
  if (value && typeof value === 'object') return Object.entries(value).some(([k, v]) => k.includes('\u0000') || holdsNul(v));
  return false;
}

/**
 * PostgreSQL text cannot hold U+0000 (it refuses the whole statement), so a NUL in any field or
 * in the query would fail deep inside a use-case. Refuse it at the edge, for every route at once.
 */
export const refuseNulBytes: RequestHandler = (req, _res, next) => {
  if (holdsNul(req.body) || holdsNul(req.query) || req.path.includes('\u0000')) return next(new UnreadableRequest('form'));
  next();
};
