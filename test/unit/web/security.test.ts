import { describe, expect, it } from 'vitest';
import type { Request } from 'express';
import { sameOriginOnly } from '../../../src/web/middleware/security.ts';
import { Forbidden } from '../../../src/web/errors.ts';

function run(method: string, headers: Record<string, string>): unknown {
  const req = { method, get: (h: string) => headers[h.toLowerCase()] } as unknown as Request;
  let result: unknown = 'not called';
  sameOriginOnly(req, {} as never, (err?: unknown) => {
    result = err ?? null;
  });
  return result;
}

// OWASP CSRF Prevention Cheat Sheet: verify Origin against the target, and use Fetch Metadata (Sec-Fetch-Site).
describe('sameOriginOnly', () => {
  it.each([
    ['GET from another site is allowed (no state change over GET)', 'GET', { 'sec-fetch-site': 'cross-site', origin: 'https://evil.example', host: 'vote.example.org' }, null],
    ['same-origin POST', 'POST', { 'sec-fetch-site': 'same-origin', origin: 'https://vote.example.org', host: 'vote.example.org' }, null],
    ['POST with no browser headers (non-browser client)', 'POST', { host: 'vote.example.org' }, null],
    ['user-typed navigation', 'POST', { 'sec-fetch-site': 'none', host: 'vote.example.org' }, null],
  ])('%s', (_name, method, headers, expected) => {
    expect(run(method, headers)).toBe(expected);
  });

  it.each([
    ['cross-site POST', { 'sec-fetch-site': 'cross-site', host: 'vote.example.org' }],
    ['same-site but other origin POST', { 'sec-fetch-site': 'same-site', host: 'vote.example.org' }],
    ['POST whose Origin names another host', { origin: 'https://evil.example', host: 'vote.example.org' }],
    ['POST with an unreadable Origin', { origin: '::not a url::', host: 'vote.example.org' }],
  ])('refuses a %s', (_name, headers) => {
    expect(run('POST', headers)).toBeInstanceOf(Forbidden);
  });
});
