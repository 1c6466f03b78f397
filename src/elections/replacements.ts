import { z } from 'zod';
import { isUuid, memberHash, randomUuid } from '../custody/index.ts';
import { InvalidInput } from '../errors.ts';
import { memberEmailSchema } from '../rosters/rosterInput.ts';
import { canonicalEmail } from '../rosters/rosterRepo.ts';
import type { UseCaseContext } from './context.ts';
import { acceptsBallotsAt } from './electionRepo.ts';
import { ElectionNotFound, ElectionNotOpen, ElectionStateConflict } from './errors.ts';
import { grantReplacement, replacementMailing } from './replacementRepo.ts';

/**
 * "Lost your code?": a member of a roster election asks on the ballot page for a replacement,
 * mailed to their address by the sender (sendMail.ts) through the same durable path as the
 * invitation: the code's hash waits in pending_codes and becomes spendable only once the SMTP
 * server accepts the message.
 *
 * The lost code stays valid: nothing stored pairs an address with a code, so it cannot be found
 * to withdraw it. Instead each member gets at most REPLACEMENTS_PER_MEMBER (1) replacement per
 * election, granted under the keyed hash of the address by one atomic INSERT … ON CONFLICT, so
 * the cap holds across instances sharing the database; the draw publishes how many were sent.
 *
 * The answer never depends on the address: the caller shows the same page whatever happened, and
 * this use-case returns nothing. Both paths run the same statements in one transaction: the
 * election read FOR SHARE, the upsert of the replacement mailing (which writes a row version every
 * time, so both paths write and commit with a WAL flush), and the one grant statement. What still
 * differs is that for a member not granted before, that statement inserts two small rows (the grant
 * and the queued delivery) where otherwise it inserts none: a little index work inside the same
 * transaction and commit, small but not zero and not measured here. The message itself is sent later by the mail loop,
 * never within the request; its outgoing SMTP connection is visible to whoever watches the server.
 */
export const replacementForm = z.object({ email: z.string().max(1000).catch('') });

export async function requestReplacement(ctx: UseCaseContext, input: { electionId: string; email: unknown }): Promise<void> {
  const form = replacementForm.parse({ email: input.email });
  const parsed = memberEmailSchema.safeParse(form.email);
  if (!parsed.success) {
    const message = parsed.error.issues[0]!.message;
    throw new InvalidInput(message, [{ path: 'email', message }]);
  }
  if (!isUuid(input.electionId)) throw new ElectionNotFound();
  const canonical = canonicalEmail(parsed.data);
  const hash = memberHash(ctx.secrets.codePepper, canonical);
  await ctx.knex.transaction(async (trx) => {
    const now = ctx.now();
    // FOR SHARE, as a cast takes it: closing (FOR UPDATE) waits for this grant, so the draw counts it.
    const row = await trx('elections').where({ id: input.electionId }).forShare().first('id', 'state', 'opens_at', 'closes_at', 'roster_id');
    if (!row || row.state === 'draft') throw new ElectionNotFound();
    if (!row.roster_id) throw new ElectionStateConflict('This vote uses printed codes: the site mails no codes for it. Ask its organiser.');
    const e = { state: row.state, opensAt: new Date(row.opens_at), closesAt: new Date(row.closes_at) };
    if (!acceptsBallotsAt(e, now)) throw new ElectionNotOpen(now < e.opensAt && row.state === 'open' ? 'not-yet-open' : 'closed');
    const mailingId = await replacementMailing(trx, { id: randomUuid(ctx.random), electionId: row.id, at: now });
    await grantReplacement(trx, { electionId: row.id, rosterId: row.roster_id, mailingId, canonicalEmail: canonical, memberHash: hash });
  });
}
