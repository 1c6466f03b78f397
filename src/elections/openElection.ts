import { countCodes } from './codeRepo.ts';
import { recordEvent } from './audit.ts';
import type { UseCaseContext } from './context.ts';
import { ownedElection } from './electionAccess.ts';
import type { Knex } from 'knex';
import { memberHash } from '../custody/index.ts';
import { canonicalAddresses, countRosterMembers } from '../rosters/rosterRepo.ts';
import type { Election } from './electionRepo.ts';
import { ElectionStateConflict, MemberOverBudget, NoCodesIssued, OverBudget, RosterEmpty, TallyKeyMissing } from './errors.ts';
import { queueInvitations } from './mailings.ts';
import { budgetPreview, memberBudgetPreview } from './ledger.ts';
import { DEFAULT_GROUP_NAME, groupIdFor, insertElectorate, lockMemberLedger } from './ledgerRepo.ts';

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
    if (e.rosterId) {
      await recordElectorate(trx, ctx, { electionId: e.id, rosterId: e.rosterId, epsilon: e.epsilon, neighbour: e.neighbour });
    } else {
      await checkGroupBudget(trx, ctx, e, now);
    }
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

/** Printed codes: the election's group (the owner's), whose row lock serialises openings in it, so two cannot both squeeze under the budget. */
async function checkGroupBudget(trx: Knex.Transaction, ctx: UseCaseContext, e: Election, now: Date): Promise<void> {
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
}

/**
 * A roster: the electorate is fixed now (the roster's members cannot change while the election is
 * open or waiting for its draw), recorded as the keyed hashes of the members' canonical addresses,
 * and the budget is checked for every member against every draw over their address on this
 * instance. The election has no member group: its charge belongs to its members. Openings of
 * roster elections are serialised instance-wide (lockMemberLedger), so two overlapping electorates
 * cannot both squeeze a member under the budget.
 */
async function recordElectorate(
  trx: Knex.Transaction,
  ctx: UseCaseContext,
  input: { electionId: string; rosterId: string; epsilon: string; neighbour: 'replace-one' | 'add-remove' },
): Promise<void> {
  await lockMemberLedger(trx);
  const addresses = await canonicalAddresses(trx, input.rosterId);
  if (addresses.length === 0) throw new RosterEmpty();
  await insertElectorate(
    trx,
    input.electionId,
    addresses.map((a) => memberHash(ctx.secrets.codePepper, a)),
  );
  await trx('elections').where({ id: input.electionId }).update({ group_id: null });
  const budget = await memberBudgetPreview(trx, ctx, input);
  if (budget.exceeds && !budget.allowOverBudget) throw new MemberOverBudget(budget.projected, budget.budget);
}
