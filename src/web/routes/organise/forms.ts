import type { InvalidInput } from '../../../errors.ts';

/** Field name → message, shown beside the field and in the error summary. */
export type FieldErrors = Record<string, string>;

type Body = Record<string, unknown> | undefined;

/** One text field of an urlencoded body; a repeated name keeps its first value. */
export function field(body: Body, name: string): string {
  const v = body?.[name];
  if (typeof v === 'string') return v;
  if (Array.isArray(v) && typeof v[0] === 'string') return v[0];
  return '';
}

/** A repeated field (extended:false gives a string for one value, an array for several). */
export function fields(body: Body, name: string, max: number): string[] {
  const v = body?.[name];
  const list = typeof v === 'string' ? [v] : Array.isArray(v) ? v : [];
  return list.slice(0, max).map((x) => (typeof x === 'string' ? x : ''));
}

export function errorsFrom(e: InvalidInput): FieldErrors {
  const errors: FieldErrors = {};
  for (const issue of e.issues) if (!(issue.path in errors)) errors[issue.path] = issue.message;
  if (Object.keys(errors).length === 0) errors.form = e.message;
  return errors;
}

/** The note at the top of a form: each entry links to its field, whose own message sits beside it (views/organise/partials/error-summary.ejs). */
export function summaryOf(errors: FieldErrors, anchor: (key: string) => string = (k) => k): { href: string; message: string }[] {
  return Object.entries(errors).map(([key, message]) => ({ href: `#${anchor(key)}`, message }));
}
