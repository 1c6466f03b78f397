import { z } from 'zod';
import { randomUuid } from '../custody/index.ts';
import type { Db } from '../db/knex.ts';
import { InvalidInput } from '../errors.ts';
import { countRosterMembers, findRoster, isRosterOrganiser } from '../rosters/rosterRepo.ts';
import { recordEvent } from './audit.ts';
import type { UseCaseContext } from './context.ts';
import { ownedElection } from './electionAccess.ts';
import type { Election } from './electionRepo.ts';
import { ElectionStateConflict } from './errors.ts';
import {
  cancelMailing,
  deliveryCounts,
  insertMailing,
  listDeliveries,
  listMailings,
  queueRoster,
  requeueFailed,
  scheduledNotices,
  startMailing,
  type DeliveryState,
  type Mailing,
} from './mailRepo.ts';
import { carriesCode, type MailingKind } from './mailText.ts';

/**
 * Mail to a roster, as the organiser sees and steers it. The invitation is queued when a roster
 * election opens; notices are scheduled here and started by the sender when due. What an
 * organiser sees is per address only queued, sent or failed (with the server's answer), and only
 * if they are one of the roster's organisers; never a code, and nothing about voting.
 */

/** Called inside openElection's transaction: one invitation per member of the (now fixed) roster. */
export async function queueInvitations(db: Db, ctx: UseCaseContext, e: Election, at: Date): Promise<number> {
  const id = randomUuid(ctx.random);
  await insertMailing(db, { id, electionId: e.id, kind: 'invitation', hoursBefore: null, state: 'started', at });
  await queueRoster(db, id, e.rosterId!);
  return countRosterMembers(db, e.rosterId!);
}

type Due = Awaited<ReturnType<typeof scheduledNotices>>[number];

function noticeDecision(n: Due, now: Date): 'wait' | 'start' | 'cancel' {
  if (!n.rosterId) return 'cancel';
  if (n.kind === 'published') return n.publishedAt ? 'start' : 'wait';
  if (n.electionState === 'draft') return 'wait';
  const votingOpen = n.electionState === 'open' && now < n.closesAt;
  if (!votingOpen) return 'cancel'; // closed before the notice was due: it would say something false
  if (n.kind === 'opens') return now >= n.opensAt ? 'start' : 'wait';
  return now.getTime() >= n.closesAt.getTime() - n.hoursBefore! * 3_600_000 ? 'start' : 'wait';
}

/** Starts every notice that is due (one delivery per member), and cancels those that can no longer be true. */
export async function startDueNotices(ctx: UseCaseContext): Promise<number> {
  const now = ctx.now();
  let started = 0;
  for (const n of await scheduledNotices(ctx.knex)) {
    const decision = noticeDecision(n, now);
    if (decision === 'wait') continue;
    await ctx.knex.transaction(async (trx) => {
      // Only a still-scheduled notice is taken, so two rounds never start one twice.
      const row = await trx('mailings').where({ id: n.id, state: 'scheduled' }).forUpdate().first('id');
      if (!row) return;
      if (decision === 'cancel') {
        await cancelMailing(trx, n.id);
        return;
      }
      await queueRoster(trx, n.id, n.rosterId!);
      await startMailing(trx, n.id, now);
      started++;
    });
  }
  return started;
}

export const NOTICE_LIMITS = Object.freeze({ hoursMin: 1, hoursMax: 720 });

export const noticeSchema = z.discriminatedUnion('kind', [
  z.object({ kind: z.literal('opens') }),
  z.object({
    kind: z.literal('closing'),
    hoursBefore: z.coerce
      .number({ error: 'Give the number of hours as a whole number, such as 24.' })
      .int('Give the number of hours as a whole number, such as 24.')
      .min(NOTICE_LIMITS.hoursMin, `Give at least ${NOTICE_LIMITS.hoursMin} hour.`)
      .max(NOTICE_LIMITS.hoursMax, `Give at most ${NOTICE_LIMITS.hoursMax} hours (30 days).`),
  }),
  z.object({ kind: z.literal('published') }),
]);
export type NoticeInput = z.infer<typeof noticeSchema>;

async function rosterElection(db: Db, electionId: string, organiserId: string, lock: boolean): Promise<Election> {
  const e = await ownedElection(db, electionId, organiserId, { lock });
  if (!e.rosterId) throw new ElectionStateConflict('This election uses printed codes: the site sends no mail for it.');
  return e;
}

export async function scheduleNotice(ctx: UseCaseContext, input: { electionId: string; organiserId: string; notice: unknown }): Promise<void> {
  const parsed = noticeSchema.safeParse(input.notice);
  if (!parsed.success) {
    const message = parsed.error.issues[0]!.message.startsWith('Invalid') ? 'Choose a notice from the list.' : parsed.error.issues[0]!.message;
    throw new InvalidInput(message, [{ path: parsed.error.issues[0]!.path.includes('hoursBefore') ? 'hoursBefore' : 'kind', message }]);
  }
  const notice = parsed.data;
  await ctx.knex.transaction(async (trx) => {
    const e = await rosterElection(trx, input.electionId, input.organiserId, true);
    const now = ctx.now();
    if (notice.kind !== 'published' && !(e.state === 'draft' || (e.state === 'open' && now < e.closesAt))) {
      throw new ElectionStateConflict('Voting has closed, so a notice about voting would come too late.');
    }
    if (notice.kind === 'published' && e.state === 'published') throw new ElectionStateConflict('The result is published already.');
    const hoursBefore = notice.kind === 'closing' ? notice.hoursBefore : null;
    const same = await trx('mailings')
      .where({ election_id: e.id, kind: notice.kind, state: 'scheduled' })
      .andWhere((q) => (hoursBefore === null ? q.whereNull('hours_before') : q.where('hours_before', hoursBefore)))
      .first('id');
    if (same) {
      const message = 'That notice is scheduled already.';
      throw new InvalidInput(message, [{ path: 'kind', message }]);
    }
    await insertMailing(trx, { id: randomUuid(ctx.random), electionId: e.id, kind: notice.kind, hoursBefore, state: 'scheduled', at: now });
    await recordEvent(
      trx,
      { electionId: e.id, organiserId: input.organiserId, action: 'notice-scheduled', detail: { kind: notice.kind, hoursBefore: hoursBefore ?? 0 } },
      now,
    );
  });
}

export async function cancelNotice(ctx: UseCaseContext, input: { electionId: string; organiserId: string; mailingId: string }): Promise<void> {
  await ctx.knex.transaction(async (trx) => {
    const e = await rosterElection(trx, input.electionId, input.organiserId, true);
    const row = await trx('mailings')
      .where({ id: z.uuid().safeParse(input.mailingId).success ? input.mailingId : null, election_id: e.id })
      .first('id', 'kind');
    if (!row || row.kind === 'invitation' || !(await cancelMailing(trx, row.id)))
      throw new ElectionStateConflict('That notice has been sent or cancelled already.');
    await recordEvent(trx, { electionId: e.id, organiserId: input.organiserId, action: 'notice-cancelled' }, ctx.now());
  });
}

/** The organiser's "send again": failed invitations and replacements are queued again, each to get a fresh code. */
export async function resendFailed(ctx: UseCaseContext, input: { electionId: string; organiserId: string }): Promise<{ queued: number }> {
  return ctx.knex.transaction(async (trx) => {
    const e = await rosterElection(trx, input.electionId, input.organiserId, true);
    const now = ctx.now();
    if (!(e.state === 'open' && now < e.closesAt)) throw new ElectionStateConflict('Voting has closed, so a code sent now could not be used.');
    let queued = 0;
    for (const m of await listMailings(trx, e.id)) if (carriesCode(m.kind)) queued += await requeueFailed(trx, m.id);
    await recordEvent(trx, { electionId: e.id, organiserId: input.organiserId, action: 'invitations-resent', detail: { count: queued } }, now);
    return { queued };
  });
}

export interface MailingView {
  id: string;
  kind: MailingKind;
  hoursBefore: number | null;
  state: Mailing['state'];
  counts: Record<DeliveryState, number>;
  /** Per address, only for the roster's organisers. */
  deliveries: { email: string; state: DeliveryState; answer: string | null }[] | null;
}

export interface MailPage {
  election: Election;
  roster: { name: string; members: number } | null;
  /** Whether this organiser may see the roster's addresses. */
  seesAddresses: boolean;
  mailings: MailingView[];
}

/** What the election's mail page shows. One read-only transaction. */
export async function mailPage(ctx: UseCaseContext, input: { electionId: string; organiserId: string }): Promise<MailPage> {
  return ctx.knex.transaction(async (trx) => {
    const e = await ownedElection(trx, input.electionId, input.organiserId, { lock: false });
    const roster = e.rosterId ? await findRoster(trx, e.rosterId) : null;
    const seesAddresses = roster ? await isRosterOrganiser(trx, roster.id, input.organiserId) : false;
    const mailings: MailingView[] = [];
    for (const m of await listMailings(trx, e.id)) {
      mailings.push({
        id: m.id,
        kind: m.kind,
        hoursBefore: m.hoursBefore,
        state: m.state,
        counts: await deliveryCounts(trx, m.id),
        deliveries: seesAddresses && m.state === 'started' ? await listDeliveries(trx, m.id) : null,
      });
    }
    return {
      election: e,
      roster: roster ? { name: roster.name, members: await countRosterMembers(trx, roster.id) } : null,
      seesAddresses,
      mailings,
    };
  });
}
