import { z } from 'zod';

/**
 * Member forms. Form values are strings; anything else (a repeated field, a missing one)
 * becomes an empty code, which the code check then calls malformed. The ballot code's own
 * shape (17 symbols with a check symbol, or 27 in the older format) is judged by the custody layer, not here.
 */
const codeField = z.string().max(200).catch('');

export const idParam = z.object({ id: z.string().max(100) });

/** Ballot and confirmation steps carry the code and the ticks as hidden fields. */
export const ballotForm = z.object({
  code: codeField,
  approve: z.unknown().optional(),
  /** "yes" when the member comes back from the confirmation step to change their ticks. */
  changing: z.string().max(10).optional().catch(undefined),
  /** One-time cast token from the confirmation form (src/custody/castToken.ts); anything else is ignored. */
  castToken: z.string().max(100).optional().catch(undefined),
});
