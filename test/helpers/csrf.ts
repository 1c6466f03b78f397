/** Reading a page's CSRF token and its cookies, shared by every suite that posts a form. */

/** The token in a page's first hidden _csrf field (synchroniser or signed double-submit). */
export function csrfFrom(html: string): string {
  const m = /name="_csrf" value="([^"]+)"/.exec(html);
  if (!m) throw new Error('page has no CSRF field');
  return m[1]!;
}

/** The same, or '' when the page has no form. */
export function csrfOrEmpty(html: string): string {
  return /name="_csrf" value="([^"]+)"/.exec(html)?.[1] ?? '';
}

/** The cookies a response sets, as one Cookie request header (`a=1; b=2`), attributes dropped. */
export function cookieHeaderFrom(setCookie: unknown): string {
  const list = Array.isArray(setCookie) ? (setCookie as string[]) : typeof setCookie === 'string' ? [setCookie] : [];
  return list.map((c) => c.split(';')[0]!).join('; ');
}
