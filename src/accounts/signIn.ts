import { z } from 'zod';
import { recordEvent } from '../elections/audit.ts';
import type { UseCaseContext } from '../elections/context.ts';
import { SignInFailed } from './errors.ts';
import { demoLoginRetired } from './demoOrganiser.ts';
import { findCredentials, updatePasswordHash } from './organiserRepo.ts';
import { dummyHash, hashPassword, needsRehash, OWASP_PASSWORD_KDF, PASSWORD_MAX, verifyPassword } from './passwords.ts';

const input = z.object({ email: z.string().max(254), password: z.string().max(PASSWORD_MAX * 4) });

/**
 * Checks an email and password. Every failure is the same SignInFailed. When the email is
 * unknown, a dummy hash at the same cost is verified anyway, so response time does not tell
 * whether an account exists (OWASP Authentication Cheat Sheet, "Authentication Responses").
 */
export async function signIn(ctx: UseCaseContext, raw: { email: string; password: string }): Promise<{ organiserId: string }> {
  const parsed = input.safeParse(raw);
  if (!parsed.success) throw new SignInFailed();
  const { email, password } = parsed.data;
  const cost = ctx.passwordKdf ?? OWASP_PASSWORD_KDF;
  const credentials = await findCredentials(ctx.knex, email);
  const hash = credentials?.passwordHash ?? (await dummyHash(cost, ctx.random));
  const ok = await verifyPassword(hash, password);
  if (!credentials || !ok) throw new SignInFailed();
  if (await demoLoginRetired(ctx.knex, credentials)) throw new SignInFailed();

  const upgraded = needsRehash(credentials.passwordHash, cost) ? await hashPassword(password, cost, ctx.random) : null;
  await ctx.knex.transaction(async (trx) => {
    if (upgraded) await updatePasswordHash(trx, credentials.id, upgraded);
    await recordEvent(trx, { electionId: null, organiserId: credentials.id, action: 'signed-in' }, ctx.now());
  });
  return { organiserId: credentials.id };
}
