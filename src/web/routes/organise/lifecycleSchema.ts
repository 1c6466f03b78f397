import { z } from 'zod';
import { field } from './forms.ts';

type Body = Record<string, unknown> | undefined;

export const openModeSchema = z.enum(['now', 'schedule']);

export function readOpenMode(body: Body): 'now' | 'schedule' | null {
  const r = openModeSchema.safeParse(field(body, 'mode'));
  return r.success ? r.data : null;
}

/** A confirmation checkbox: only the exact value "yes" counts. */
export const confirmed = (body: Body): boolean => field(body, 'confirm') === 'yes';

/** The tally passphrase as sent; bounded so hashing work stays bounded. Never echoed or logged. */
export const tallyPassphraseField = z
  .string()
  .min(1, 'Enter the tally passphrase you chose when creating the election.')
  .max(1024, 'That passphrase is longer than any we accept.');
