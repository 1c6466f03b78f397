import { deleteExpiredSessions } from './accounts/sessionRepo.ts';
import { publishDue } from './elections/publishResult.ts';
import { releaseAbandonedTallies } from './elections/closeAndTally.ts';
import { shredDue } from './elections/shred.ts';
import { releaseDueTurnouts } from './elections/liveTurnout.ts';
import { sendDueMail } from './elections/sendMail.ts';
import type { UseCaseContext } from './elections/context.ts';
import type { Logger } from './log.ts';

export interface Job {
  name: string;
  run(ctx: UseCaseContext): Promise<unknown>;
}

/**
/**
 * Periodic chores. Each would be safe on several app servers at once (publishing and shredding lock
 * the election row with SKIP LOCKED and check its state, deletions are idempotent), but only one
 * runs them at a time: see withHousekeepingLock.
 */
export const jobs: readonly Job[] = [
  // First, so that at start-up a tally interrupted by the last stop is offered again at once.
  { name: 'release tallies whose process has gone', run: (ctx) => releaseAbandonedTallies(ctx) },
  // Live turnouts: the releases whose fixed time has come (src/elections/liveTurnout.ts).
  { name: 'release live turnouts that are due', run: (ctx) => releaseDueTurnouts(ctx) },
  { name: 'expire sessions', run: (ctx) => deleteExpiredSessions(ctx.knex, ctx.now()) },
  // Attempt-limit rows whose window has ended (src/web/middleware/limits.ts); `expire` is in ms.
  { name: 'forget ended attempt limits', run: (ctx) => ctx.knex('rate_limits').where('expire', '<', ctx.now().getTime()).delete() },
  // Before shredding, so a result published now with "shred at once" is shredded in the same pass.
  { name: 'publish results whose preview has ended', run: (ctx) => publishDue(ctx) },
  { name: 'shred ballots past their retention', run: (ctx) => shredDue(ctx) },
];

interface RawConnection {
  query(text: string, values?: unknown[]): Promise<{ rows: Array<Record<string, unknown>> }>;
}

/**
 * On PostgreSQL, one app server at a time runs the chores: a session-level advisory lock on a
 * connection held for the round (released by PostgreSQL if the process dies). The key is per
 * schema, so instances sharing a schema share the lock. PGlite needs none: one process per data
 * directory is enforced by its lock (db/dirLock.ts). If the lock cannot even be asked for (database
 * unreachable) the jobs run anyway, so each reports its own failure.
 */
export async function withHousekeepingLock(ctx: UseCaseContext, round: () => Promise<void>, name = 'housekeeping'): Promise<boolean> {
  if (ctx.engine !== 'postgres') {
    await round();
    return true;
  }
  const client = ctx.knex.client as { acquireConnection(): Promise<RawConnection>; releaseConnection(c: RawConnection): Promise<unknown> };
  let conn: RawConnection;
  try {
    conn = await client.acquireConnection();
  } catch {
    await round();
    return true;
  }
  if (!/^[a-z]+$/.test(name)) throw new Error('a lock name is lower-case letters');
  const key = `hashtext(current_schema() || ' veiltally ${name}')`;
  try {
    const got = await conn.query(`SELECT pg_try_advisory_lock(${key}) AS ok`);
    if (got.rows[0]?.ok !== true) return false;
    try {
      await round();
    } finally {
      await conn.query(`SELECT pg_advisory_unlock(${key})`);
    }
    return true;
  } finally {
    await client.releaseConnection(conn);
  }
}

export function startHousekeeping(ctx: UseCaseContext, logger: Logger, everyMs = 60_000): { stop(): void } {
  let running = false;
  const tick = async () => {
    if (running) return;
    running = true;
    try {
      await withHousekeepingLock(ctx, async () => {
        for (const job of jobs) {
          try {
            await job.run(ctx);
          } catch (e) {
            // A chore that fails is retried next tick; the failure is reported, not hidden.
            logger.error({ job: job.name, err: { name: (e as Error)?.name, message: (e as Error)?.message } }, 'housekeeping job failed');
          }
        }
      });
    } catch (e) {
      logger.error({ err: { name: (e as Error)?.name, message: (e as Error)?.message } }, 'housekeeping lock failed');
    } finally {
      running = false;
    }
  };
  const timer = setInterval(() => void tick(), everyMs);
  timer.unref();
  void tick();
  return { stop: () => clearInterval(timer) };
}

/**
 * Mail to rosters (src/elections/sendMail.ts): a loop of its own, every few seconds, so an
 * invitation goes out soon after opening rather than at the next chore round. One instance at a
 * time holds the mail lock for a whole round; the round begins by withdrawing whatever a dead
 * round left pending, which is only safe because nobody else can be sending meanwhile. On PGlite
 * the directory lock already makes this the only process. The log gets counts, never an address.
 */
export function startMailLoop(ctx: UseCaseContext, logger: Logger, everyMs = 2_000): { stop(): Promise<void> } {
  let current: Promise<void> | null = null;
  const round = async () => {
    try {
      await withHousekeepingLock(
        ctx,
        async () => {
          const r = await sendDueMail(ctx);
          if (r.sent + r.failed + r.withdrawn > 0) logger.info({ sent: r.sent, failed: r.failed, withdrawn: r.withdrawn }, 'mail round');
        },
        'mail',
      );
    } catch (e) {
      logger.error({ err: { name: (e as Error)?.name, message: (e as Error)?.message } }, 'mail round failed');
    }
  };
  const tick = () => {
    if (current || !ctx.mail) return;
    current = round().finally(() => {
      current = null;
    });
  };
  const timer = setInterval(tick, everyMs);
  timer.unref();
  tick();
  return {
    /** Stops the loop; resolves once a round in progress has finished. */
    stop: async () => {
      clearInterval(timer);
      await current;
    },
  };
}
