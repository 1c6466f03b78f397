import { findCurrentOrganiserByEmail } from '../accounts/organiserRepo.ts';
import { randomUuid } from '../custody/index.ts';
import type { Db } from '../db/knex.ts';
import { recordEvent } from '../elections/audit.ts';
import type { UseCaseContext } from '../elections/context.ts';
import { InvalidInput } from '../errors.ts';
import { RosterFrozen, RosterImportRejected, RosterInUse, RosterNotFound } from './errors.ts';
import { memberEmailSchema, memberNameSchema, parseRosterCsv, ROSTER_LIMITS, rosterNameSchema } from './rosterInput.ts';
import {
  canonicalAddresses,
  countRosterMembers,
  deleteMember,
  deleteRoster as deleteRosterRow,
  electionsUsingRoster,
  findRoster,
  findRosterMemberByEmail,
  insertMembers,
  insertRoster,
  isRosterOrganiser,
  lockRoster,
  renameRoster as renameRosterRow,
  rosterInUse,
  type Roster,
} from './rosterRepo.ts';

/**
 * Rosters, each in one transaction. Only the roster's organisers (its owner and those it was
 * shared with) reach one; anyone else gets RosterNotFound, exactly like a missing id. Audit
 * entries name the roster by id and count members; they never hold an address or a name.
 */
export async function organisersRoster(db: Db, rosterId: string, organiserId: string, options: { lock: boolean }): Promise<Roster> {
  const r = options.lock ? await lockRoster(db, rosterId) : await findRoster(db, rosterId);
  if (!r || !(await isRosterOrganiser(db, r.id, organiserId))) throw new RosterNotFound();
  return r;
}

function checkedName(name: string): string {
  const parsed = rosterNameSchema.safeParse(name);
  if (!parsed.success) throw new InvalidInput(parsed.error.issues[0]!.message, [{ path: 'name', message: parsed.error.issues[0]!.message }]);
  return parsed.data;
}

async function refuseIfFrozen(db: Db, rosterId: string): Promise<void> {
  const live = await rosterInUse(db, rosterId);
  if (live.length > 0) throw new RosterFrozen(live.map((e) => e.title));
}

const event = (action: string, rosterId: string, organiserId: string, detail: Record<string, number | string> = {}) => ({
  electionId: null,
  organiserId,
  action,
  detail: { roster: rosterId, ...detail },
});

export async function createRoster(ctx: UseCaseContext, input: { organiserId: string; name: string }): Promise<{ rosterId: string }> {
  const name = checkedName(input.name);
  return ctx.knex.transaction(async (trx) => {
    const now = ctx.now();
    const rosterId = randomUuid(ctx.random);
    await insertRoster(trx, { id: rosterId, ownerId: input.organiserId, name, at: now });
    await recordEvent(trx, event('roster-created', rosterId, input.organiserId), now);
    return { rosterId };
  });
}

export async function renameRoster(ctx: UseCaseContext, input: { organiserId: string; rosterId: string; name: string }): Promise<void> {
  const name = checkedName(input.name);
  await ctx.knex.transaction(async (trx) => {
    const r = await organisersRoster(trx, input.rosterId, input.organiserId, { lock: true });
    await renameRosterRow(trx, r.id, name);
    await recordEvent(trx, event('roster-renamed', r.id, input.organiserId), ctx.now());
  });
}

/**
 * Deletes the roster with every address and name on it. Refused while an election that is not
 * yet published uses it (its electorate is fixed until then). Published elections forget the roster.
 */
export async function deleteRoster(ctx: UseCaseContext, input: { organiserId: string; rosterId: string }): Promise<void> {
  await ctx.knex.transaction(async (trx) => {
    const r = await organisersRoster(trx, input.rosterId, input.organiserId, { lock: true });
    const using = await electionsUsingRoster(trx, r.id);
    const live = using.filter((e) => e.state !== 'published');
    if (live.length > 0) throw new RosterInUse(live.map((e) => e.title));
    if (using.length > 0) await trx('elections').where({ roster_id: r.id }).update({ roster_id: null });
    const members = await countRosterMembers(trx, r.id);
    await deleteRosterRow(trx, r.id);
    await recordEvent(trx, event('roster-deleted', r.id, input.organiserId, { members }), ctx.now());
  });
}

export async function addMember(
  ctx: UseCaseContext,
  input: { organiserId: string; rosterId: string; email: string; name: string },
): Promise<{ email: string }> {
  const email = memberEmailSchema.safeParse(input.email);
  const name = memberNameSchema.safeParse(input.name);
  const issues = [
    ...(email.success ? [] : [{ path: 'email', message: email.error.issues[0]!.message }]),
    ...(name.success ? [] : [{ path: 'memberName', message: name.error.issues[0]!.message }]),
  ];
  if (!email.success || !name.success) throw new InvalidInput(issues[0]!.message, issues);
  return ctx.knex.transaction(async (trx) => {
    const r = await organisersRoster(trx, input.rosterId, input.organiserId, { lock: true });
    await refuseIfFrozen(trx, r.id);
    if (await findRosterMemberByEmail(trx, r.id, email.data)) {
      const message = 'That address is already on this roster (addresses are compared ignoring case).';
      throw new InvalidInput(message, [{ path: 'email', message }]);
    }
    if ((await countRosterMembers(trx, r.id)) >= ROSTER_LIMITS.members) {
      const message = `A roster holds at most ${ROSTER_LIMITS.members.toLocaleString('en')} members.`;
      throw new InvalidInput(message, [{ path: 'email', message }]);
    }
    await insertMembers(trx, r.id, [{ id: randomUuid(ctx.random), email: email.data, displayName: name.data }]);
    await recordEvent(trx, event('roster-member-added', r.id, input.organiserId), ctx.now());
    return { email: email.data };
  });
}

/** Removes one member: their address and name are deleted with the row. */
export async function removeMember(ctx: UseCaseContext, input: { organiserId: string; rosterId: string; memberId: string }): Promise<boolean> {
  return ctx.knex.transaction(async (trx) => {
    const r = await organisersRoster(trx, input.rosterId, input.organiserId, { lock: true });
    await refuseIfFrozen(trx, r.id);
    const removed = await deleteMember(trx, r.id, input.memberId);
    if (removed) await recordEvent(trx, event('roster-member-removed', r.id, input.organiserId), ctx.now());
    return removed;
  });
}

/**
 * Imports a CSV of members, all or nothing: if any row is bad (not an address, a name too long,
 * the same address twice in the file or already on the roster) nothing is added and every bad
 * row is listed (RosterImportRejected).
 */
export async function importMembers(ctx: UseCaseContext, input: { organiserId: string; rosterId: string; csv: string }): Promise<{ added: number }> {
  return ctx.knex.transaction(async (trx) => {
    const r = await organisersRoster(trx, input.rosterId, input.organiserId, { lock: true });
    await refuseIfFrozen(trx, r.id);
    const existing = new Set(await canonicalAddresses(trx, r.id));
    const { members, errors } = parseRosterCsv(input.csv, existing);
    if (errors.length > 0) throw new RosterImportRejected(errors);
    if (existing.size + members.length > ROSTER_LIMITS.members) {
      throw new RosterImportRejected([
        {
          line: 1,
          message: `A roster holds at most ${ROSTER_LIMITS.members.toLocaleString('en')} members; this import would make ${existing.size + members.length}.`,
        },
      ]);
    }
    await insertMembers(
      trx,
      r.id,
      members.map((m) => ({ ...m, id: randomUuid(ctx.random) })),
    );
    await recordEvent(trx, event('roster-imported', r.id, input.organiserId, { added: members.length }), ctx.now());
    return { added: members.length };
  });
}

/** Shares the roster with another organiser of this site, who may then see its addresses and use it. */
export async function shareRoster(ctx: UseCaseContext, input: { organiserId: string; rosterId: string; email: string }): Promise<{ email: string }> {
  const email = input.email.trim().toLowerCase().slice(0, 254);
  return ctx.knex.transaction(async (trx) => {
    const r = await organisersRoster(trx, input.rosterId, input.organiserId, { lock: true });
    const target = email ? await findCurrentOrganiserByEmail(trx, email) : null;
    const notFound = 'There is no organiser with that email on this site. Add them on the Organisers page first.';
    if (!target) throw new InvalidInput(notFound, [{ path: 'shareEmail', message: notFound }]);
    if (target.id === r.ownerId || (await isRosterOrganiser(trx, r.id, target.id))) {
      const already = 'That organiser already keeps this roster.';
      throw new InvalidInput(already, [{ path: 'shareEmail', message: already }]);
    }
    const now = ctx.now();
    await trx('roster_organisers').insert({ roster_id: r.id, organiser_id: target.id, added_by: input.organiserId, added_at: now });
    await recordEvent(trx, event('roster-shared', r.id, input.organiserId, { with: target.email }), now);
    return { email: target.email };
  });
}

/** The organisers of a roster: the owner first, then those it was shared with. */
export async function rosterOrganisers(db: Db, roster: Roster): Promise<{ id: string; email: string; owner: boolean }[]> {
  const owner = await db('organisers').where({ id: roster.ownerId }).first('id', 'email');
  const shared = await db('roster_organisers as s')
    .join('organisers as o', 'o.id', 's.organiser_id')
    .where('s.roster_id', roster.id)
    .whereNull('o.removed_at')
    .orderBy('o.email')
    .select('o.id', 'o.email');
  return [...(owner ? [{ id: owner.id, email: owner.email, owner: true }] : []), ...shared.map((s) => ({ id: s.id, email: s.email, owner: false }))];
}
