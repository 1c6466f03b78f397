import { randomUuid } from '../custody/index.ts';
import { recordEvent } from '../elections/audit.ts';
import type { UseCaseContext } from '../elections/context.ts';
import { EmailTaken, NotAdministrator, SignInFailed } from './errors.ts';
import { parseCredentials } from './firstRun.ts';
import { findOrganiser, insertOrganiser } from './organiserRepo.ts';
import { hashPassword, OWASP_PASSWORD_KDF } from './passwords.ts';

/**
 * An administrator adds an organiser with a starting password, which they pass on privately.
 * Emails are unique; a clash gives EmailTaken. The new organiser is never an administrator.
 */
export async function addOrganiser(
  ctx: UseCaseContext,
  input: { organiserId: string; email: string; password: string },
): Promise<{ organiserId: string }> {
  const { email, password } = parseCredentials(input);
  const passwordHash = await hashPassword(password, ctx.passwordKdf ?? OWASP_PASSWORD_KDF, ctx.random);
  let id = randomUuid(ctx.random);
  const now = ctx.now();
  await ctx.knex.transaction(async (trx) => {
    const me = await findOrganiser(trx, input.organiserId);
    if (!me) throw new SignInFailed();
    if (!me.admin) throw new NotAdministrator();
    if (!(await insertOrganiser(trx, { id, email, passwordHash, createdBy: input.organiserId, at: now }))) {
      // A removed organiser's email comes back to life with the new password; a current one is taken.
      const revived = await trx('organisers')
        .where({ email })
        .whereNotNull('removed_at')
        .update({ removed_at: null, password_hash: passwordHash, admin: false });
      if (revived !== 1) throw new EmailTaken();
      id = (await trx('organisers').where({ email }).first('id')).id as string;
    }
    await recordEvent(trx, { electionId: null, organiserId: input.organiserId, action: 'organiser-added', detail: { email } }, now);
  });
  return { organiserId: id };
}
