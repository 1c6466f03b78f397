import { z } from 'zod';
import { isUuid } from '../custody/ids.ts';
import type { Db } from '../db/knex.ts';
import { findCurrentOrganiserByEmail } from '../accounts/organiserRepo.ts';
import { InvalidInput } from '../errors.ts';
import { recordEvent } from './audit.ts';
import type { UseCaseContext } from './context.ts';
import { ownedElection } from './electionAccess.ts';

/**
 * Sharing an election with another organiser of this site: they then see and run it exactly
 * as its owner does (codes, opening, closing, tally with the passphrase, publication). The
 * passphrase is never shared by the site: the owner passes it on privately if they wish.
 */
const emailField = z
  .string()
  .trim()
  .toLowerCase()
  .min(1, 'Enter the email of an organiser of this site.')
  .max(254, 'That email address is too long.');

export interface ElectionOrganiser {
  id: string;
  email: string;
  owner: boolean;
}

/** Everyone who runs the election: the owner first, then those it was shared with. */
export async function electionOrganisers(db: Db, electionId: string): Promise<ElectionOrganiser[]> {
  const owner = await db('elections as e').join('organisers as o', 'o.id', 'e.owner_id').where('e.id', electionId).first('o.id', 'o.email');
  const shared = await db('election_organisers as s')
    .join('organisers as o', 'o.id', 's.organiser_id')
    .where('s.election_id', electionId)
    .whereNull('o.removed_at')
    .orderBy('o.email')
    .select('o.id', 'o.email');
  return [...(owner ? [{ id: owner.id, email: owner.email, owner: true }] : []), ...shared.map((r) => ({ id: r.id, email: r.email, owner: false }))];
}

export async function shareElection(
  ctx: UseCaseContext,
  input: { electionId: string; organiserId: string; email: string },
): Promise<{ email: string }> {
  const parsed = emailField.safeParse(input.email);
  if (!parsed.success) throw new InvalidInput(parsed.error.issues[0]!.message, [{ path: 'email', message: parsed.error.issues[0]!.message }]);
  return ctx.knex.transaction(async (trx) => {
    const e = await ownedElection(trx, input.electionId, input.organiserId, { lock: true });
    const target = await findCurrentOrganiserByEmail(trx, parsed.data);
    const notFound = 'There is no organiser with that email on this site. Add them on the Organisers page first.';
    if (!target) throw new InvalidInput(notFound, [{ path: 'email', message: notFound }]);
    if (target.id === e.ownerId || target.id === input.organiserId) {
      const already = 'That organiser already runs this election.';
      throw new InvalidInput(already, [{ path: 'email', message: already }]);
    }
    const now = ctx.now();
    await trx('election_organisers')
      .insert({ election_id: e.id, organiser_id: target.id, added_by: input.organiserId, added_at: now })
      .onConflict(['election_id', 'organiser_id'])
      .ignore();
    await recordEvent(trx, { electionId: e.id, organiserId: input.organiserId, action: 'shared', detail: { with: target.email } }, now);
    return { email: target.email };
  });
}

/** Stops sharing with one organiser. The owner cannot be taken off their own election. */
export async function unshareElection(
  ctx: UseCaseContext,
  input: { electionId: string; organiserId: string; withOrganiserId: string },
): Promise<void> {
  await ctx.knex.transaction(async (trx) => {
    const e = await ownedElection(trx, input.electionId, input.organiserId, { lock: true });
    if (!isUuid(input.withOrganiserId)) return;
    const target = await trx('organisers').where({ id: input.withOrganiserId }).first('id', 'email');
    if (!target) return;
    const removed = await trx('election_organisers').where({ election_id: e.id, organiser_id: target.id }).delete();
    if (removed > 0)
      await recordEvent(trx, { electionId: e.id, organiserId: input.organiserId, action: 'unshared', detail: { with: target.email } }, ctx.now());
  });
}
