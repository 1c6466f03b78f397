import { z } from 'zod';
import { MAX_CODES_PER_CALL } from '../../../elections/issueCodes.ts';
import { field, type FieldErrors } from './forms.ts';

type Body = Record<string, unknown> | undefined;

export const CODE_FORMATS = ['csv', 'slips', 'screen'] as const;
export type CodeFormat = (typeof CODE_FORMATS)[number];

export interface IssueValues {
  count: string;
  format: CodeFormat;
}

const countSchema = z.coerce
  .number({ message: 'Give the number of codes as a whole number.' })
  .int('Give the number of codes as a whole number.')
  .min(1, 'Issue at least 1 code.')
  .max(MAX_CODES_PER_CALL, `Issue at most ${MAX_CODES_PER_CALL.toLocaleString('en')} codes at a time.`);

export function readIssue(body: Body): { values: IssueValues; count: number | null; errors: FieldErrors } {
  const count = field(body, 'count').trim().slice(0, 20);
  const format = z.enum(CODE_FORMATS).safeParse(field(body, 'format'));
  const values: IssueValues = { count, format: format.success ? format.data : 'csv' };
  const errors: FieldErrors = {};
  const n = /^\d+$/.test(count) ? countSchema.safeParse(count) : null;
  if (!n || !n.success) errors.count = n?.error.issues[0]?.message ?? 'Give the number of codes as a whole number, such as 40.';
  if (!format.success) errors.format = 'Choose how you want the codes.';
  return { values, count: n?.success ? n.data : null, errors };
}

/** A code as typed or pasted; custody's normaliseCode decides whether it is well formed. */
export const revokeCodeField = (body: Body): string => field(body, 'code').slice(0, 200);

/** The hidden fields of the download button: the batch seed and how many codes it made. */
const batchSchema = z.object({
  batch: z.string().max(100).catch(''),
  count: z.coerce.number().int().min(1).max(MAX_CODES_PER_CALL).catch(0),
});

export const readBatch = (body: Body): { batch: string; count: number } =>
  batchSchema.parse({ batch: field(body, 'batch'), count: field(body, 'count') });
