import { randomUuid } from '../custody/index.ts';
import { recordEvent } from '../elections/audit.ts';
import type { UseCaseContext } from '../elections/context.ts';
import { EmailTaken, SignInFailed } from './errors.ts';
import { parseCredentials } from './firstRun.ts';
import { findOrganiser, insertOrganiser } from './organiserRepo.ts';
import { hashPassword, OWASP_PASSWORD_KDF } from './passwords.ts';

/**
 * An organiser adds another organiser with a starting password, which they pass on
 * privately. Emails are unique; a clash gives EmailTaken.
 */
export async function addOrganiser(
  ctx: UseCaseContext,
  input: { organiserId: string; email: string; password: string },
): Promise<{ organiserId: string }> {
  const { email, password } = parseCredentials(input);
  const passwordHash = await hashPassword(password, ctx.passwordKdf ?? OWASP_PASSWORD_KDF, ctx.random);
  const id = randomUuid(ctx.random);
  const now = ctx.now();
  await ctx.knex.transaction(async (trx) => {
    if (!(await findOrganiser(trx, input.organiserId))) throw new SignInFailed();
    if (!(await insertOrganiser(trx, { id, email, passwordHash, createdBy: input.organiserId, at: now }))) throw new EmailTaken();
    await recordEvent(trx, { electionId: null, organiserId: input.organiserId, action: 'organiser-added', detail: { email } }, now);
  });
  return { organiserId: id };
}
