import { randomUuid } from '../custody/index.ts';
import { InvalidInput } from '../errors.ts';
import { recordEvent } from '../elections/audit.ts';
import type { UseCaseContext } from '../elections/context.ts';
import type { Db } from '../db/knex.ts';
import { emailSchema } from './email.ts';
import { FirstRunDone } from './errors.ts';
import { countRealOrganisers, insertOrganiser } from './organiserRepo.ts';
import { hashPassword, OWASP_PASSWORD_KDF, passwordSchema } from './passwords.ts';

/** The instance_settings row whose primary key makes the first run happen at most once. */
export const FIRST_RUN_SETTING = 'first-organiser';

/**
 * The setup page is offered only while no organiser exists and the first run has not been claimed.
 * The demo's sample login does not count: after exploring the sample elections, the real first
 * organiser can still be created here.
 */
export async function isFirstRunOpen(db: Db): Promise<boolean> {
  if ((await countRealOrganisers(db)) > 0) return false;
  return !(await db('instance_settings').where({ name: FIRST_RUN_SETTING }).first('name'));
}

export function parseCredentials(input: { email: string; password: string }): { email: string; password: string } {
  const email = emailSchema.safeParse(input.email);
  const password = passwordSchema.safeParse(input.password);
  const issues = [
    ...(email.success ? [] : [{ path: 'email', message: email.error.issues[0]!.message }]),
    ...(password.success ? [] : [{ path: 'password', message: password.error.issues[0]!.message }]),
  ];
  if (issues.length > 0 || !email.success) throw new InvalidInput('Please correct the highlighted fields.', issues);
  return { email: email.data, password: input.password };
}

/**
 * Creates the first organiser. Race-safe: the transaction first claims the
 * instance_settings row FIRST_RUN_SETTING (a primary key), so of two simultaneous
 * first-run posts one inserts it and the other finds it taken and gets FirstRunDone.
 * On PostgreSQL the second insert waits for the first transaction and then sees the conflict.
 */
export async function createFirstOrganiser(ctx: UseCaseContext, input: { email: string; password: string }): Promise<{ organiserId: string }> {
  const { email, password } = parseCredentials(input);
  if (!(await isFirstRunOpen(ctx.knex))) throw new FirstRunDone();
  const passwordHash = await hashPassword(password, ctx.passwordKdf ?? OWASP_PASSWORD_KDF, ctx.random);
  const id = randomUuid(ctx.random);
  const now = ctx.now();
  await ctx.knex.transaction(async (trx) => {
    const claimed = await trx('instance_settings')
      .insert({ name: FIRST_RUN_SETTING, value: JSON.stringify({ organiserId: id, at: now.toISOString() }) })
      .onConflict('name')
      .ignore()
      .returning('name');
    if (claimed.length !== 1 || (await countRealOrganisers(trx)) > 0) throw new FirstRunDone();
    // Whoever sets up the site administers its accounts; later changes only from the command line.
    await insertOrganiser(trx, { id, email, passwordHash, createdBy: null, at: now, admin: true });
    await recordEvent(trx, { electionId: null, organiserId: id, action: 'first-organiser-created' }, now);
  });
  return { organiserId: id };
}
