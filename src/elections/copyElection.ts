import type { Db } from '../db/knex.ts';
import { isRosterOrganiser } from '../rosters/rosterRepo.ts';
import type { UseCaseContext } from './context.ts';
import { createElection } from './createElection.ts';
import { DRAFT_LIMITS, type DraftInput } from './draft.ts';
import { ownedElection } from './electionAccess.ts';
import type { Election } from './electionRepo.ts';
import { findGroup } from './ledgerRepo.ts';
import { formatWallClock, wallClockAt, zonedToUtc } from './time.ts';

/**
 * A new draft made from an election the organiser can see, in any state: its wording, options in
 * order, seats, ε, draw rule, neighbour relation, quorum, live turnout, publication and retention
 * choices, member group (by name, the copier's own), contact line and time zone. Never its codes,
 * ballots, receipts, keys, result, statement, mail, ledger rows, audit entries or sharing: the draft
 * gets a key pair of its own under a new passphrase, and the copier is its only organiser.
 */

const DAY_MS = 24 * 3600_000;
const WEEK_MS = 7 * DAY_MS;
/** A copy opens at least this far ahead, so it does not turn past while the organiser edits it. */
export const COPY_LEAD_MS = DAY_MS;
export const COPY_SUFFIX = ' (copy)';

/** The title marked as a copy, within the title limit (a long one is shortened, with an ellipsis). */
export function copyTitle(title: string): string {
  const room = DRAFT_LIMITS.titleMax - COPY_SUFFIX.length;
  if (title.length <= room) return `${title}${COPY_SUFFIX}`;
  let cut = '';
  for (const ch of title) {
    if (cut.length + ch.length > room - 1) break; // whole characters: never half a surrogate pair
    cut += ch;
  }
  return `${cut.trimEnd()}…${COPY_SUFFIX}`;
}

/** The opening `weeks` whole weeks later on the zone's clocks (same weekday and time of day); in a clock gap, 7 × 24 hours each. */
function weeksLater(opensAt: Date, zone: string, weeks: number): Date {
  const w = wallClockAt(opensAt, zone);
  const shifted = new Date(Date.UTC(w.year, w.month - 1, w.day + 7 * weeks, w.hour, w.minute));
  const wall = {
    year: shifted.getUTCFullYear(),
    month: shifted.getUTCMonth() + 1,
    day: shifted.getUTCDate(),
    hour: shifted.getUTCHours(),
    minute: shifted.getUTCMinutes(),
  };
  const r = zonedToUtc(formatWallClock(wall), zone);
  return r.ok ? r.utc : new Date(opensAt.getTime() + weeks * WEEK_MS);
}

/**
 * The copy's voting times. A source still opening at least a day ahead keeps its own; otherwise
 * both move the fewest whole weeks that put the opening a day ahead, keeping the weekday, the time
 * of day and the length of voting (so a live-turnout schedule stays as it was). A copy is often the
 * next of a recurring vote, so this is usually the right week already; and the draft can be saved
 * as it is, since the form refuses a time already past.
 */
export function copyTimes(source: { opensAt: Date; closesAt: Date; timeZone: string }, now: Date): { opensAt: Date; closesAt: Date; weeks: number } {
  const earliest = now.getTime() + COPY_LEAD_MS;
  const length = source.closesAt.getTime() - source.opensAt.getTime();
  if (source.opensAt.getTime() >= earliest) return { opensAt: source.opensAt, closesAt: source.closesAt, weeks: 0 };
  let weeks = Math.max(1, Math.floor((earliest - source.opensAt.getTime()) / WEEK_MS));
  let opensAt = weeksLater(source.opensAt, source.timeZone, weeks);
  while (opensAt.getTime() < earliest) opensAt = weeksLater(source.opensAt, source.timeZone, ++weeks);
  return { opensAt, closesAt: new Date(opensAt.getTime() + length), weeks };
}

/** What the copy will be, shown on the page before it is made. */
export interface CopyPlan {
  source: Election;
  draft: DraftInput;
  /** 'roster': the same roster; 'printed': the source used printed codes; 'printed-instead': the copier does not run the source's roster. */
  electorate: 'roster' | 'printed' | 'printed-instead';
  weeks: number;
}

async function planFor(db: Db, source: Election, organiserId: string, now: Date): Promise<CopyPlan> {
  const keepRoster = source.rosterId !== null && (await isRosterOrganiser(db, source.rosterId, organiserId));
  const group = source.groupId ? await findGroup(db, source.groupId) : null;
  const times = copyTimes(source, now);
  const draft: DraftInput = {
    title: copyTitle(source.title),
    description: source.description,
    contact: source.contact,
    options: source.options.map((o) => ({ label: o.label, description: o.description })),
    seats: source.seats,
    epsilon: source.epsilon,
    neighbour: source.neighbour,
    rule: source.rule,
    opensAt: times.opensAt,
    closesAt: times.closesAt,
    timeZone: source.timeZone,
    publishTurnout: source.publishTurnout,
    retentionDays: source.retentionDays,
    expectedVoters: source.expectedVoters,
    ...(group ? { memberGroup: group.name } : {}),
    rosterId: keepRoster ? source.rosterId : null,
    liveTurnout: source.liveTurnout,
    quorum: source.quorum,
  };
  const electorate = keepRoster ? 'roster' : source.rosterId === null ? 'printed' : 'printed-instead';
  return { source, draft, electorate, weeks: times.weeks };
}

/** The plan for the copy page; ElectionNotFound for an election this organiser cannot see. */
export async function planCopy(ctx: UseCaseContext, input: { electionId: string; organiserId: string }): Promise<CopyPlan> {
  return ctx.knex.transaction(async (trx) => {
    const source = await ownedElection(trx, input.electionId, input.organiserId, { lock: false });
    return planFor(trx, source, input.organiserId, ctx.now());
  });
}

/**
 * Makes the copy through createElection (its checks, key pair, key file and 'created' entry), and
 * notes on the source's record, for its other organisers, that a draft was made from it.
 */
export async function copyElection(
  ctx: UseCaseContext,
  input: { electionId: string; organiserId: string; passphrase: string },
): Promise<{ electionId: string; electorate: CopyPlan['electorate'] }> {
  const plan = await planCopy(ctx, input);
  const { electionId } = await createElection(ctx, {
    organiserId: input.organiserId,
    draft: plan.draft,
    passphrase: input.passphrase,
    copyOf: plan.source.id,
  });
  return { electionId, electorate: plan.electorate };
}
