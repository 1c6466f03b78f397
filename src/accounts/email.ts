import { z } from 'zod';

/** RFC 5321 §4.5.3.1.3: a path is at most 256 octets, so an address is at most 254 characters. */
export const emailSchema = z
  .string()
  .trim()
  .toLowerCase()
  .min(1, 'Enter an email address.')
  .max(254, 'That email address is too long.')
  .pipe(z.email({ message: 'Enter an email address like name@example.org.' }));
