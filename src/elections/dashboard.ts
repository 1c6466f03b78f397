import { listEvents, type AuditRow } from './audit.ts';
import type { UseCaseContext } from './context.ts';
import { ownedElection } from './electionAccess.ts';
import type { Election } from './electionRepo.ts';
import { electionStatus, type ElectionStatus } from './status.ts';
import { countCodes } from './codeRepo.ts';
import { THIS_PROCESS, withoutDeadClaim } from './tallyClaim.ts';
import { listTurnoutReleases, type TurnoutRelease } from './liveTurnout.ts';

export interface Dashboard {
  election: Election;
  status: ElectionStatus;
  now: Date;
  /**
   * Codes issued and withdrawn. Never how many ballots were cast: a live count would tell an
   * organiser watching a member whether they voted. Exact turnout reaches the organiser only
   * inside the drawn result, and only when it was chosen before opening to publish it.
   */
  codes: { codesIssued: number; codesRevoked: number };
  events: AuditRow[];
  /** The live turnout's releases so far (noisy figures only); null when it is off. */
  liveTurnout: TurnoutRelease[] | null;
}

/** Everything the organiser's election page shows, read in one transaction so the figures agree. */
export async function loadDashboard(ctx: UseCaseContext, input: { electionId: string; organiserId: string }): Promise<Dashboard> {
  return ctx.knex.transaction(async (trx) => {
    const now = ctx.now();
    // A claim whose process has gone shows as the interrupted attempt it is, so the retry is offered at once.
    const election = withoutDeadClaim(
      await ownedElection(trx, input.electionId, input.organiserId, { lock: false }),
      now,
      ctx.tallyProcess ?? THIS_PROCESS,
      ctx.engine,
    );
    return {
      election,
      status: electionStatus(election, now),
      now,
      codes: await countCodes(trx, election.id).then((c) => ({ codesIssued: c.issued, codesRevoked: c.revoked })),
      // The draw is stamped with the minute it becomes visible; until then it is not listed.
      events: (await listEvents(trx, election.id, { publicOnly: false })).filter((ev) => ev.at <= now),
      liveTurnout: election.liveTurnout ? await listTurnoutReleases({ knex: trx }, election.id) : null,
    };
  });
}
