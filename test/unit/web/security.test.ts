import { describe, expect, it } from 'vitest';
import type { Request } from 'express';
import { sameOriginOnly } from '../../../src/web/middleware/security.ts';
import { Forbidden } from '../../../src/web/errors.ts';

function run(method: string, headers: Record<string, string>, publicUrl = 'https://vote.example.org'): unknown {
  const req = { method, get: (h: string) => headers[h.toLowerCase()] } as unknown as Request;
  let result: unknown = 'not called';
  sameOriginOnly(publicUrl)(req, {} as never, (err?: unknown) => {
    result = err ?? null;
  });
  return result;
}

// OWASP CSRF Prevention Cheat Sheet: verify Origin against the target, and use Fetch Metadata (Sec-Fetch-Site).
describe('sameOriginOnly', () => {
  it.each([
    [
      'GET from another site is allowed (no state change over GET)',
      'GET',
      { 'sec-fetch-site': 'cross-site', origin: 'https://evil.example', host: 'vote.example.org' },
      null,
    ],
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

  it('accepts the configured public origin when a proxy rewrote Host (X-Forwarded-Host set)', () => {
    const headers = {
      'sec-fetch-site': 'same-origin',
      origin: 'https://vote.example.org',
      host: '127.0.0.1:3000',
      'x-forwarded-host': 'vote.example.org',
    };
    expect(run('POST', headers)).toBe(null);
    expect(run('POST', { ...headers, origin: 'https://evil.example' })).toBeInstanceOf(Forbidden);
  });
});
