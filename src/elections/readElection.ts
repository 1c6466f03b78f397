import type { UseCaseContext } from './context.ts';
import { findElection, type Election } from './electionRepo.ts';

/** The election a public page shows (ballot, result, statement, a code's ballot); null when no election has this id. */
export async function readElection(ctx: UseCaseContext, id: string): Promise<Election | null> {
  return findElection(ctx.knex, id);
}
