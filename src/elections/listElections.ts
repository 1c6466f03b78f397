import type { UseCaseContext } from './context.ts';
import { listOwnElections, type ElectionSummary } from './draftRepo.ts';
import type { Election } from './electionRepo.ts';
import { electionStatus, type ElectionStatus } from './status.ts';

/** The organiser's own elections, newest first, each with its status at this moment. */
export async function listElections(
  ctx: UseCaseContext,
  input: { organiserId: string },
): Promise<(ElectionSummary & { status: ElectionStatus; shared: boolean })[]> {
  const now = ctx.now();
  const rows = await listOwnElections(ctx.knex, input.organiserId);
  return rows.map((r) => ({ ...r, status: electionStatus({ ...r, state: r.state as Election['state'] }, now) }));
}
