import { describe, expect, it } from 'vitest';
import { safeNext, signInUrl } from '../../../src/web/routes/organise/auth.ts';

// OWASP Unvalidated Redirects and Forwards Cheat Sheet: only local, known-shape paths survive.
describe('safeNext', () => {
  it.each(['/organise', '/organise/organisers', '/organise/elections/new', '/organise/elections/5f0155cd-c6da-4213-acc0-37d916a87b32/codes'])(
    'keeps %s',
    (p) => expect(safeNext(p)).toBe(p),
  );

  it.each([
    'https://evil.example/organise',
    '//evil.example/organise',
    '/\\evil.example',
    '/organise/../admin',
    '/organise?next=//evil',
    '/organise/elections/x#frag',
    '/vote/123',
    '/organise/sign-in',
    '/organise/first-run',
    '/organise/sign-out',
    'organise',
    '/organise//evil.example',
    '/organise/%2F%2Fevil',
    '',
    '/organise/a/b/c/d/e',
  ])('drops %j', (p) => expect(safeNext(p)).toBeNull());

  it('drops non-strings', () => {
    expect(safeNext(undefined)).toBeNull();
    expect(safeNext(['/organise'])).toBeNull();
  });

  it('builds the sign-in URL with the path encoded', () => {
    expect(signInUrl('/organise/elections/new')).toBe('/organise/sign-in?next=%2Forganise%2Felections%2Fnew');
    expect(signInUrl(null)).toBe('/organise/sign-in');
  });
});
