import { z } from 'zod';

export const idParam = z.object({ id: z.string().max(100) });

/** The receipt's own shape (10 Crockford symbols) is judged by the custody layer. */
export const receiptForm = z.object({ receipt: z.string().max(100).catch('') });
