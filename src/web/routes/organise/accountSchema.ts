import { z } from 'zod';
import { emailSchema } from '../../../accounts/email.ts';
import { passwordSchema } from '../../../accounts/passwords.ts';
import type { FieldErrors } from './forms.ts';
import { field } from './forms.ts';

type Body = Record<string, unknown> | undefined;

/** Sign-in only bounds sizes: whether the pair is right is the use-case's single generic answer. */
export const signInSchema = z.object({
  email: z.string().max(254),
  password: z.string().max(1024),
  next: z.string().max(300),
});

export function readSignIn(body: Body) {
  return signInSchema.parse({ email: field(body, 'email'), password: field(body, 'password'), next: field(body, 'next') });
}

/** A new organiser: email, a password of at least 12 characters, typed twice. */
export function readNewOrganiser(body: Body): { values: { email: string }; errors: FieldErrors; email: string; password: string } {
  const rawEmail = field(body, 'email');
  const password = field(body, 'password');
  const again = field(body, 'passwordAgain');
  const errors: FieldErrors = {};
  const email = emailSchema.safeParse(rawEmail);
  if (!email.success) errors.email = email.error.issues[0]!.message;
  const pw = passwordSchema.safeParse(password);
  if (!pw.success) errors.password = pw.error.issues[0]!.message;
  else if (password !== again) errors.passwordAgain = 'The two passwords are not the same. Type the password again in both fields.';
  return { values: { email: rawEmail.slice(0, 254) }, errors, email: email.success ? email.data : '', password };
}
