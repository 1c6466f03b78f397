import { planLiveTurnout, releaseTurnout, turnoutSchedule, type TurnoutMark } from '../mechanism/index.ts';
import { toCount } from '../db/knex.ts';
import { countReceipts } from './ballotRepo.ts';
import type { UseCaseContext } from './context.ts';

export interface TurnoutRelease {
  step: number;
  dueAt: Date;
  released: number;
}

/** The released series of an election, in order: noisy figures only. */
export async function listTurnoutReleases(ctx: Pick<UseCaseContext, 'knex'>, electionId: string): Promise<TurnoutRelease[]> {
  const rows = await ctx.knex('live_turnout_releases').where({ election_id: electionId }).orderBy('step').select('step', 'due_at', 'released');
  return rows.map((r) => ({ step: Number(r.step), dueAt: new Date(r.due_at), released: Number(r.released) }));
}

/**
 * Housekeeping: every scheduled release that is due, for every election with a live turnout, in
 * order, each in one transaction that locks the election row (SKIP LOCKED: another instance at it
 * is left alone). Releases happen at the schedule's fixed times, never on demand; one missed while
 * the server was down is made at the next round from the turnout then. Returns the releases made;
 * an election that fails is reported (the first failure is thrown) after the others have had their turn.
 */
export async function releaseDueTurnouts(ctx: UseCaseContext): Promise<number> {
  const now = ctx.now();
  const candidates = await ctx
    .knex('elections')
    .whereNotNull('live_turnout_epsilon')
    .whereNotNull('opened_at')
    .where('opens_at', '<', now)
    .select('id');
  let made = 0;
  let failure: unknown = null;
  // One election whose settings cannot be released (refused by the core) must not hold up the others.
  for (const { id } of candidates) {
    try {
      made += await releaseDueFor(ctx, String(id), now);
    } catch (e) {
      failure ??= e;
    }
  }
  if (failure) throw failure;
  return made;
}

async function releaseDueFor(ctx: UseCaseContext, electionId: string, now: Date): Promise<number> {
  return ctx.knex.transaction(async (trx) => {
    const e = await trx('elections')
      .where({ id: electionId })
      .forUpdate()
      .skipLocked()
      .first('opens_at', 'closes_at', 'live_turnout_epsilon', 'live_turnout_interval_hours');
    if (!e?.live_turnout_epsilon) return 0;
    const schedule = turnoutSchedule(new Date(e.opens_at), new Date(e.closes_at), Number(e.live_turnout_interval_hours));
    const plan = planLiveTurnout(schedule.length, String(e.live_turnout_epsilon));
    const done = toCount((await trx('live_turnout_releases').where({ election_id: electionId }).count({ n: '*' }).first())?.n ?? 0);
    let step = done + 1;
    if (step > plan.releases || (schedule[step - 1] as Date) > now) return 0;
    const exact = await countReceipts(trx, electionId);
    let marks: TurnoutMark[] = (await trx('live_turnout_marks').where({ election_id: electionId }).select('at', 'exact', 'released')).map((m) => ({
      at: Number(m.at),
      exact: Number(m.exact),
      released: Number(m.released),
    }));
    let made = 0;
    for (; step <= plan.releases && (schedule[step - 1] as Date) <= now; step += 1) {
      const r = releaseTurnout(plan, marks, step, exact, ctx.random);
      await trx('live_turnout_releases').insert({ election_id: electionId, step, due_at: schedule[step - 1], released: r.released });
      marks = r.marks;
      made += 1;
    }
    await trx('live_turnout_marks').where({ election_id: electionId }).delete();
    if (marks.length > 0) await trx('live_turnout_marks').insert(marks.map((m) => ({ election_id: electionId, ...m })));
    return made;
  });
}
