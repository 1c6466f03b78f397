import { z } from 'zod';

export const idParam = z.object({ id: z.string().max(100) });
export const keyIdParam = z.object({ keyId: z.string().regex(/^[0-9a-f]{16}$/) });
