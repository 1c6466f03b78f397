import { z } from 'zod';

/**
 * Member forms. Form values are strings; anything else (a repeated field, a missing one)
 * becomes an empty value, which the code check then calls malformed. The ballot code's own
 * shape (17 symbols with a check symbol) is judged by the custody layer, not here.
 * Only the code step takes the code, and only the ballot step takes ticks; what a member reached
 * is kept in the sealed step cookie (stepCookie.ts), not in hidden fields.
 */
export const idParam = z.object({ id: z.string().max(100) });

/** The code entry form (the only place a code is typed). */
export const codeForm = z.object({ code: z.string().max(200).catch('') });

/** The ballot form: the ticked positions, judged by parseApprovals. */
export const ticksForm = z.object({ approve: z.unknown().optional() });

/** The confirmation page's cast form: the digest of what it read back (stepCookie.ts, readBackTag). */
export const castForm = z.object({ readBack: z.string().max(100).optional().catch(undefined) });
