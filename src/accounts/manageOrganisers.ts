import { recordEvent } from '../elections/audit.ts';
import type { UseCaseContext } from '../elections/context.ts';
import { InvalidInput } from '../errors.ts';
import {
  CannotRemoveAdministrator,
  CannotRemoveYourself,
  NotAdministrator,
  OrganiserNotFound,
  StillRunsElections,
  WrongCurrentPassword,
} from './errors.ts';
import { electionsRunAlone, findCredentials, findOrganiser, markRemoved, setAdmin, updatePasswordHash } from './organiserRepo.ts';
import { hashPassword, OWASP_PASSWORD_KDF, passwordSchema, verifyPassword } from './passwords.ts';
import { deleteSessionsOf } from './sessionRepo.ts';

function checkNewPassword(password: string, again: string): void {
  const pw = passwordSchema.safeParse(password);
  if (!pw.success) throw new InvalidInput(pw.error.issues[0]!.message, [{ path: 'password', message: pw.error.issues[0]!.message }]);
  if (password !== again) {
    const message = 'The two passwords are not the same. Type the new password again in both fields.';
    throw new InvalidInput(message, [{ path: 'passwordAgain', message }]);
  }
}

/**
 * An organiser changes their own password, proving the current one first (OWASP ASVS 5.0
 * §6.2.3: changing a password requires the current one). Their other sessions end.
 */
export async function changeOwnPassword(
  ctx: UseCaseContext,
  input: { organiserId: string; currentSessionId?: string; current: string; password: string; passwordAgain: string },
): Promise<void> {
  const me = await findOrganiser(ctx.knex, input.organiserId);
  const credentials = me ? await findCredentials(ctx.knex, me.email) : null;
  if (!credentials || !(await verifyPassword(credentials.passwordHash, input.current))) throw new WrongCurrentPassword();
  checkNewPassword(input.password, input.passwordAgain);
  const hash = await hashPassword(input.password, ctx.passwordKdf ?? OWASP_PASSWORD_KDF, ctx.random);
  await ctx.knex.transaction(async (trx) => {
    await updatePasswordHash(trx, credentials.id, hash);
    await deleteSessionsOf(trx, credentials.id, input.currentSessionId);
    await recordEvent(trx, { electionId: null, organiserId: credentials.id, action: 'password-changed' }, ctx.now());
  });
}

/**
 * The operator (command line only) sets a new password for an organiser who lost theirs, to be
 * passed on privately. No organiser can do this for another from the web, administrators
 * included: it would let them sign in as that organiser and run their elections. Every session
 * of the organiser ends, so whoever held their old password is signed out.
 */
export async function resetOrganiserPassword(
  ctx: UseCaseContext,
  input: { targetId: string; password: string; passwordAgain: string },
): Promise<{ email: string }> {
  const target = await findOrganiser(ctx.knex, input.targetId);
  if (!target) throw new OrganiserNotFound();
  checkNewPassword(input.password, input.passwordAgain);
  const hash = await hashPassword(input.password, ctx.passwordKdf ?? OWASP_PASSWORD_KDF, ctx.random);
  await ctx.knex.transaction(async (trx) => {
    await updatePasswordHash(trx, target.id, hash);
    await deleteSessionsOf(trx, target.id);
    // organiserId null: done by the operator on the command line.
    await recordEvent(trx, { electionId: null, organiserId: null, action: 'organiser-password-reset', detail: { email: target.email } }, ctx.now());
  });
  return { email: target.email };
}

/** The acting organiser, who must be an administrator (NotAdministrator otherwise, whatever the target). */
export async function requireAdministrator(ctx: UseCaseContext, organiserId: string): Promise<void> {
  const me = await findOrganiser(ctx.knex, organiserId);
  if (!me?.admin) throw new NotAdministrator();
}

/**
 * An administrator removes another organiser: they can no longer sign in and their sessions end.
 * Their row stays (removed_at), so the activity record keeps naming who did what. Refused while
 * they alone run an election not yet published: it would be left with nobody to run it, and
 * handing it to the administrator would let one organiser into another's election. Another
 * administrator is removed only after the operator demotes them.
 */
export async function removeOrganiser(ctx: UseCaseContext, input: { organiserId: string; targetId: string }): Promise<{ email: string }> {
  await requireAdministrator(ctx, input.organiserId);
  if (input.targetId === input.organiserId) throw new CannotRemoveYourself();
  const now = ctx.now();
  return ctx.knex.transaction(async (trx) => {
    const target = await findOrganiser(trx, input.targetId);
    if (!target) throw new OrganiserNotFound();
    if (target.admin) throw new CannotRemoveAdministrator();
    const alone = await electionsRunAlone(trx, target.id);
    if (alone > 0) throw new StillRunsElections(alone);
    await markRemoved(trx, target.id, now);
    await deleteSessionsOf(trx, target.id);
    await recordEvent(trx, { electionId: null, organiserId: input.organiserId, action: 'organiser-removed', detail: { email: target.email } }, now);
    return { email: target.email };
  });
}

/** The operator (command line only) makes an organiser an administrator, or an ordinary organiser again. */
export async function setOrganiserAdmin(ctx: UseCaseContext, input: { targetId: string; admin: boolean }): Promise<void> {
  await ctx.knex.transaction(async (trx) => {
    const target = await findOrganiser(trx, input.targetId);
    if (!target || !(await setAdmin(trx, target.id, input.admin))) throw new OrganiserNotFound();
    await recordEvent(
      trx,
      { electionId: null, organiserId: null, action: input.admin ? 'organiser-promoted' : 'organiser-demoted', detail: { email: target.email } },
      ctx.now(),
    );
  });
}
