import { listEvents, type AuditRow } from './audit.ts';
import type { UseCaseContext } from './context.ts';
import { ownedElection } from './electionAccess.ts';
import type { Election } from './electionRepo.ts';
import { electionStatus, type ElectionStatus } from './status.ts';
import { countTurnout } from './turnout.ts';

export interface Dashboard {
  election: Election;
  status: ElectionStatus;
  now: Date;
  /** Ballots cast and codes issued: never anything per option. */
  turnout: { ballotsCast: number; codesIssued: number; codesRevoked: number };
  events: AuditRow[];
}

/** Everything the organiser's election page shows, read in one transaction so the figures agree. */
export async function loadDashboard(ctx: UseCaseContext, input: { electionId: string; organiserId: string }): Promise<Dashboard> {
  return ctx.knex.transaction(async (trx) => {
    const election = await ownedElection(trx, input.electionId, input.organiserId, { lock: false });
    const now = ctx.now();
    return {
      election,
      status: electionStatus(election, now),
      now,
      turnout: await countTurnout(trx, election.id),
      events: await listEvents(trx, election.id, { publicOnly: false }),
    };
  });
}
