import type { UseCaseContext } from '../elections/context.ts';
import { organisersRoster, rosterOrganisers } from './manageRosters.ts';
import {
  countRosterMembers,
  electionsUsingRoster,
  findRoster,
  listRosterMembers,
  listRosters,
  rosterInUse,
  type Roster,
  type RosterMember,
} from './rosterRepo.ts';

type ElectionUsing = { id: string; title: string; state: string };

/** The rosters this organiser may reach, with their member counts. */
export async function rosterList(ctx: UseCaseContext, organiserId: string): Promise<(Roster & { members: number })[]> {
  return listRosters(ctx.knex, organiserId);
}

/**
 * The electorates the election form offers: the organiser's rosters, plus the roster the draft
 * already names when the election (not the roster) was shared with this organiser, by name and
 * size only, so that saving the form keeps it.
 */
export async function electorateChoices(
  ctx: UseCaseContext,
  input: { organiserId: string; currentRosterId: string | null },
): Promise<{ id: string; name: string; members: number }[]> {
  const mine = (await listRosters(ctx.knex, input.organiserId)).map((r) => ({ id: r.id, name: r.name, members: r.members }));
  if (!input.currentRosterId || mine.some((r) => r.id === input.currentRosterId)) return mine;
  const current = await findRoster(ctx.knex, input.currentRosterId);
  if (!current) return mine;
  return [...mine, { id: current.id, name: current.name, members: await countRosterMembers(ctx.knex, current.id) }];
}

export interface RosterPage {
  roster: Roster;
  members: RosterMember[];
  organisers: { id: string; email: string; owner: boolean }[];
  elections: ElectionUsing[];
  frozen: ElectionUsing[];
}

/** One roster's page: its members, organisers and the elections using it. One read-only transaction. */
export async function rosterPage(ctx: UseCaseContext, input: { organiserId: string; rosterId: string }): Promise<RosterPage> {
  return ctx.knex.transaction(async (trx) => {
    const roster = await organisersRoster(trx, input.rosterId, input.organiserId, { lock: false });
    return {
      roster,
      members: await listRosterMembers(trx, roster.id),
      organisers: await rosterOrganisers(trx, roster),
      elections: await electionsUsingRoster(trx, roster.id),
      frozen: await rosterInUse(trx, roster.id),
    };
  });
}

/** What the delete page shows: the roster and the elections using it. */
export async function rosterDeletion(
  ctx: UseCaseContext,
  input: { organiserId: string; rosterId: string },
): Promise<{ roster: Roster; using: ElectionUsing[] }> {
  return ctx.knex.transaction(async (trx) => {
    const roster = await organisersRoster(trx, input.rosterId, input.organiserId, { lock: false });
    return { roster, using: await electionsUsingRoster(trx, roster.id) };
  });
}
