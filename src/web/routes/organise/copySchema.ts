import { z } from 'zod';

/** `?copied=` on the new draft's form after a copy: 'yes', or 'printed' when the roster could not come along. Anything else: no note. */
export const copiedSchema = z.enum(['yes', 'printed']).optional().catch(undefined);

export function readCopied(query: unknown): 'yes' | 'printed' | undefined {
  return copiedSchema.parse((query as Record<string, unknown> | undefined)?.copied);
}
