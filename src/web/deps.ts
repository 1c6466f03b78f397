import type { Config } from '../config.ts';
import type { UseCaseContext } from '../elections/context.ts';
import type { Logger } from '../log.ts';
import type { Limits } from './middleware/limits.ts';

/** What createApp is built from; main.ts and the tests assemble it. */
export interface AppDeps {
  readonly config: Config;
  readonly ctx: UseCaseContext;
  readonly logger: Logger;
  readonly sessionSecret: string;
  /** Attempt limits, kept in the database; createApp makes them when not given. */
  readonly limits: Limits;
}
