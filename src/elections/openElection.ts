import { countCodes } from './codeRepo.ts';
import { recordEvent } from './audit.ts';
import type { UseCaseContext } from './context.ts';
import { ownedElection } from './electionAccess.ts';
import { ElectionStateConflict, NoCodesIssued, OverBudget, RosterEmpty, TallyKeyMissing } from './errors.ts';
import { queueInvitations } from './mailings.ts';
import { countRosterMembers } from '../rosters/rosterRepo.ts';
import { budgetPreview } from './ledger.ts';
import { DEFAULT_GROUP_NAME, groupIdFor } from './ledgerRepo.ts';

export type OpenMode = 'now' | 'schedule';

/**
 * Locks the rule and opens the election. "now" starts voting at once (moving an opening time
 * still in the future to now); "schedule" keeps a future opening time, and casting starts
 * then (acceptsBallotsAt). Either way options, ε, seats and neighbour relation are fixed
 * from here on. Rules: at least one live (unrevoked) ballot code, and a closing time still ahead.
 * A roster election instead needs a member, and opening queues one invitation (with its own
 * code, made by the sender) per member.
 */
export async function openElection(
  ctx: UseCaseContext,
  input: { electionId: string; organiserId: string; mode: OpenMode },
): Promise<{ opensAt: Date; closesAt: Date }> {
  return ctx.knex.transaction(async (trx) => {
    const e = await ownedElection(trx, input.electionId, input.organiserId, { lock: true });
    if (e.state !== 'draft') throw new ElectionStateConflict('This election has already been opened.');
    if (!e.publicKey || e.wrappedKey == null) throw new TallyKeyMissing();
    const codes = await countCodes(trx, e.id);
    if (e.rosterId) {
      // Every code of a roster election is mailed by the site; one the organiser holds would undo that.
      if (codes.issued > 0) {
        throw new ElectionStateConflict(
          'Printed codes were issued for this draft before it named a roster. A roster election takes only the codes the site mails: make a new election for the roster, or choose printed codes.',
        );
      }
      if ((await countRosterMembers(trx, e.rosterId)) < 1) throw new RosterEmpty();
    } else if (codes.issued - codes.revoked < 1) throw new NoCodesIssued();
    const now = ctx.now();
    if (e.closesAt <= now) {
      throw new ElectionStateConflict('The closing time has already passed. Edit the election and choose a later closing time, then open it.');
    }
    if (input.mode === 'schedule' && e.opensAt <= now) {
      throw new ElectionStateConflict('The opening time has already passed, so there is nothing to schedule. Choose “Open now” instead.');
    }
    // The group row lock serialises openings in one group, so two cannot both squeeze under the budget.
    const groupId = e.groupId ?? (await groupIdFor(trx, e.ownerId, DEFAULT_GROUP_NAME, now));
    const group = await trx('member_groups').where({ id: groupId }).forUpdate().first('name');
    if (!e.groupId) await trx('elections').where({ id: e.id }).update({ group_id: groupId });
    const budget = await budgetPreview(trx, ctx, {
      ownerId: e.ownerId,
      groupName: group.name,
      epsilon: e.epsilon,
      neighbour: e.neighbour,
      electionId: e.id,
    });
    if (budget.exceeds && !budget.allowOverBudget) throw new OverBudget(budget.groupName, budget.projected, budget.budget);
    const opensAt = input.mode === 'now' && e.opensAt > now ? now : e.opensAt;
    await trx('elections').where({ id: e.id }).update({ state: 'open', opens_at: opensAt, opened_at: now, updated_at: now });
    // The roster is fixed from here (rosterInUse), so the members queued now are the electorate.
    if (e.rosterId) await queueInvitations(trx, ctx, { ...e, opensAt }, now);
    await recordEvent(
      trx,
      {
        electionId: e.id,
        organiserId: input.organiserId,
        action: 'opened',
        detail: { scheduled: opensAt > now, opensAt: opensAt.toISOString(), closesAt: e.closesAt.toISOString() },
      },
      now,
    );
    return { opensAt, closesAt: e.closesAt };
  });
}
