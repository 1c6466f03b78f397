import { recordEvent } from '../elections/audit.ts';
import type { UseCaseContext } from '../elections/context.ts';
import { InvalidInput } from '../errors.ts';
import { CannotRemoveYourself, OrganiserNotFound, WrongCurrentPassword } from './errors.ts';
import { findCredentials, findOrganiser, updatePasswordHash } from './organiserRepo.ts';
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
 * One organiser sets a new password for another (who lost theirs), to be passed on privately.
 * Every session of the other organiser ends, so whoever held their old password is signed out.
 */
export async function resetOrganiserPassword(
  ctx: UseCaseContext,
  input: { organiserId: string | null; targetId: string; password: string; passwordAgain: string },
): Promise<{ email: string }> {
  const target = await findOrganiser(ctx.knex, input.targetId);
  if (!target) throw new OrganiserNotFound();
  checkNewPassword(input.password, input.passwordAgain);
  const hash = await hashPassword(input.password, ctx.passwordKdf ?? OWASP_PASSWORD_KDF, ctx.random);
  await ctx.knex.transaction(async (trx) => {
    await updatePasswordHash(trx, target.id, hash);
    await deleteSessionsOf(trx, target.id);
    // organiserId null: done by the operator on the command line.
    await recordEvent(
      trx,
      { electionId: null, organiserId: input.organiserId, action: 'organiser-password-reset', detail: { email: target.email } },
      ctx.now(),
    );
  });
  return { email: target.email };
}

/**
 * Removes another organiser: they can no longer sign in and their sessions end. Their row stays
 * (removed_at), so the activity record keeps naming who did what. Every election they owned or
 * shared goes on being run by the others; an election they owned alone is shared with the
 * organiser who removed them, so no election is left without an organiser.
 */
export async function removeOrganiser(ctx: UseCaseContext, input: { organiserId: string; targetId: string }): Promise<{ email: string }> {
  if (input.targetId === input.organiserId) throw new CannotRemoveYourself();
  const target = await findOrganiser(ctx.knex, input.targetId);
  if (!target) throw new OrganiserNotFound();
  const now = ctx.now();
  await ctx.knex.transaction(async (trx) => {
    await trx('organisers').where({ id: target.id }).whereNull('removed_at').update({ removed_at: now });
    await deleteSessionsOf(trx, target.id);
    const orphans = await trx('elections as e')
      .where('e.owner_id', target.id)
      .whereNotExists(
        trx('election_organisers as s').join('organisers as o', 'o.id', 's.organiser_id').whereRaw('s.election_id = e.id').whereNull('o.removed_at'),
      )
      .select('e.id');
    for (const { id } of orphans) {
      await trx('election_organisers')
        .insert({ election_id: id, organiser_id: input.organiserId, added_by: input.organiserId, added_at: now })
        .onConflict(['election_id', 'organiser_id'])
        .ignore();
      await recordEvent(
        trx,
        { electionId: id, organiserId: input.organiserId, action: 'shared', detail: { with: 'you, as its organiser was removed' } },
        now,
      );
    }
    await recordEvent(trx, { electionId: null, organiserId: input.organiserId, action: 'organiser-removed', detail: { email: target.email } }, now);
  });
  return { email: target.email };
}
