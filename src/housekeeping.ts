import { deleteExpiredSessions } from './accounts/sessionRepo.ts';
import { publishDue } from './elections/publishResult.ts';
import { shredDue } from './elections/shred.ts';
import type { UseCaseContext } from './elections/context.ts';
import type { Logger } from './log.ts';

export interface Job {
  name: string;
  run(ctx: UseCaseContext): Promise<unknown>;
}

/**
 * Periodic chores. Each is safe to run on several app servers at once: publishing and shredding
 * lock the election row (SKIP LOCKED) and check its state, and deleting expired sessions is idempotent.
 */
export const jobs: readonly Job[] = [
  { name: 'expire sessions', run: (ctx) => deleteExpiredSessions(ctx.knex, ctx.now()) },
  // Before shredding, so a result published now with "shred at once" is shredded in the same pass.
  { name: 'publish results whose preview has ended', run: (ctx) => publishDue(ctx) },
  { name: 'shred ballots past their retention', run: (ctx) => shredDue(ctx) },
];

export function startHousekeeping(ctx: UseCaseContext, logger: Logger, everyMs = 60_000): { stop(): void } {
  let running = false;
  const tick = async () => {
    if (running) return;
    running = true;
    for (const job of jobs) {
      try {
        await job.run(ctx);
      } catch (e) {
        // A chore that fails is retried next tick; the failure is reported, not hidden.
        logger.error({ job: job.name, err: { name: (e as Error)?.name, message: (e as Error)?.message } }, 'housekeeping job failed');
      }
    }
    running = false;
  };
  const timer = setInterval(() => void tick(), everyMs);
  timer.unref();
  void tick();
  return { stop: () => clearInterval(timer) };
}
