import { deleteExpiredSessions } from './accounts/sessionRepo.ts';
import type { UseCaseContext } from './elections/context.ts';
import type { Logger } from './log.ts';

export interface Job {
  name: string;
  run(ctx: UseCaseContext): Promise<unknown>;
}

/** Periodic chores: expired sessions now; later ones (shredding) register here too. */
export const jobs: Job[] = [
  { name: 'expire sessions', run: (ctx) => deleteExpiredSessions(ctx.knex, ctx.now()) },
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
