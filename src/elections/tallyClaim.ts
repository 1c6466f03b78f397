import { randomUUID } from 'node:crypto';
import { hostname } from 'node:os';
import type { Engine } from '../db/knex.ts';
import type { Db } from '../db/knex.ts';
import type { Election } from './electionRepo.ts';
import { tallyInProgress } from './status.ts';

/** How often a running tally refreshes its claim's heartbeat (well inside HEARTBEAT_STALE_MS). */
export const HEARTBEAT_MS = 5_000;

/** Recorded in tally_failure when a claim is released because its process has gone. */
export const INTERRUPTED = 'TallyInterrupted';

/**
 * This process's part in tallies: who it is (a boot id drawn at start, its pid and host), which
 * elections' claims it holds, and one passphrase check at a time per election, so twenty
 * concurrent tally requests hold one Argon2id working memory, not one per libuv thread.
 */
export class TallyProcess {
  /** Elections whose claim this process holds, from the claim until runQueuedTally ends. */
  readonly running = new Set<string>();
  private readonly unlocking = new Map<string, Promise<unknown>>();

  constructor(
    readonly bootId: string,
    readonly pid: number,
    readonly host: string,
  ) {}

  /** Runs `work` after every earlier call for the same election has settled (a per-election queue). */
  one<T>(electionId: string, work: () => Promise<T>): Promise<T> {
    const before = this.unlocking.get(electionId) ?? Promise.resolve();
    const mine = before.then(work, work);
    const settled = mine.then(
      () => undefined,
      () => undefined,
    );
    this.unlocking.set(electionId, settled);
    void settled.then(() => {
      if (this.unlocking.get(electionId) === settled) this.unlocking.delete(electionId);
    });
    return mine;
  }
}

/** The running process. Tests stand in another (a process that died) with their own TallyProcess. */
export const THIS_PROCESS = new TallyProcess(randomUUID(), process.pid, hostname());

function pidAlive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (e) {
    return (e as NodeJS.ErrnoException).code === 'EPERM';
  }
}

type ClaimFields = Pick<Election, 'id' | 'state' | 'tallyClaim' | 'tallyStartedAt' | 'tallyHeartbeatAt' | 'tallyBootId' | 'tallyPid' | 'tallyHost'>;

/**
 * Is this election's tally claim held by a process that is still there?
 *  - claimed by this process: exactly while it runs the tally;
 *  - embedded (PGlite): one process per data directory, so a claim of any other boot is a dead one;
 *  - the same host: the claiming pid is gone, or is ours now (a restarted container gets its pid again);
 *  - otherwise (another host): while its heartbeat is fresh.
 */
export function claimHeld(e: ClaimFields, now: Date, me: TallyProcess, engine: Engine): boolean {
  if (!tallyInProgress(e, now) && e.tallyBootId !== me.bootId) return false;
  if (e.tallyClaim == null || (e.state !== 'closed' && e.state !== 'open')) return false;
  if (e.tallyBootId === me.bootId) return me.running.has(e.id);
  if (engine === 'pglite') return false;
  if (e.tallyHost === me.host && e.tallyPid != null && (e.tallyPid === me.pid || !pidAlive(e.tallyPid))) return false;
  return true;
}

/**
 * The election as the organiser should see it: a claim no live process holds is shown as the
 * interrupted attempt it is (nothing was drawn), so the retry is offered at once.
 */
export function withoutDeadClaim(e: Election, now: Date, me: TallyProcess, engine: Engine): Election {
  if (e.tallyClaim == null || claimHeld(e, now, me, engine)) return e;
  return { ...e, tallyClaim: null, tallyStartedAt: null, tallyHeartbeatAt: null, tallyFailure: INTERRUPTED, resultVisibleAt: null };
}

/** The row fields that release a claim without a draw, recording why. */
export function releasedClaim(failure: string): Record<string, unknown> {
  return {
    tally_failure: failure.slice(0, 64),
    tally_claim: null,
    tally_started_at: null,
    tally_heartbeat_at: null,
    tally_boot_id: null,
    tally_pid: null,
    tally_host: null,
    result_visible_at: null,
  };
}

/** Refreshes a running tally's heartbeat; does nothing once the claim is no longer this one. */
export async function beat(db: Db, electionId: string, claim: string, now: Date): Promise<void> {
  await db('elections').where({ id: electionId, tally_claim: claim }).update({ tally_heartbeat_at: now });
}
