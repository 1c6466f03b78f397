import { availableParallelism } from 'node:os';
import { BallotUnreadable, openAndCount, openingKey } from '../custody/index.ts';
import type { Db } from '../db/knex.ts';
import { countStoredBallots, sealedBatches } from './ballotRepo.ts';
import { TallyPool } from './tallyPool.ts';

/**
 * Internal: approval counts of one election. Only closeAndTally uses this; the counts go
 * straight to the mechanism and are dropped. The web layer never imports this module, and
 * nothing here logs, stores or returns counts anywhere else.
 */
export interface CountRequest {
  electionId: string;
  publicKey: Uint8Array;
  secretKey: Uint8Array;
  /** The election's shred key (custody/shredLayer.ts), or null for an election made before the layer. */
  shredKey: Uint8Array | null;
  optionCount: number;
  /** Rows per keyset page. */
  batchSize?: number;
  /** Worker threads: 0 counts in this thread; 'auto' uses all cores once the election is large. */
  threads?: number | 'auto';
}

export interface ApprovalTally {
  /** counts[i] = ballots approving option position i. */
  counts: Uint32Array;
  /** Ballots examined (readable or not). */
  ballots: number;
  unreadable: number;
}

export const DEFAULT_BATCH = 1000;
/**
 * Below this, starting worker threads costs more than it saves: a worker needs about 0.5 to
 * 0.7 s to start (loading TypeScript through tsx) and one core opens about 18 000 to 27 000
 * sealed ballots a second (measured with test/bench/tally.bench.ts on the 2-core dev machine).
 */
export const PARALLEL_FROM = 50_000;

export function chooseThreads(threads: CountRequest['threads'], ballots: number): number {
  if (typeof threads === 'number') return Math.max(0, Math.floor(threads));
  const cores = availableParallelism();
  return ballots >= PARALLEL_FROM && cores >= 2 ? cores : 0;
}

/** Streams the sealed ballots (memory O(d + batch)) and counts them, in this thread or in workers. */
export async function countApprovals(db: Db, req: CountRequest): Promise<ApprovalTally> {
  const batchSize = req.batchSize ?? DEFAULT_BATCH;
  const threads =
    req.threads === undefined || req.threads === 'auto'
      ? chooseThreads('auto', await countStoredBallots(db, req.electionId))
      : chooseThreads(req.threads, 0);
  if (threads === 0) return countHere(db, req, batchSize);

  const pool = new TallyPool(
    threads,
    { publicKey: new Uint8Array(req.publicKey), electionId: req.electionId, optionCount: req.optionCount },
    req.secretKey,
  );
  try {
    for await (const batch of sealedBatches(db, req.electionId, batchSize, req.shredKey)) await pool.submit(batch);
    return await pool.finish(req.optionCount);
  } finally {
    await pool.close();
  }
}

async function countHere(db: Db, req: CountRequest, batchSize: number): Promise<ApprovalTally> {
  const key = openingKey(req.publicKey, req.secretKey, req.electionId, req.optionCount);
  const tally: ApprovalTally = { counts: new Uint32Array(req.optionCount), ballots: 0, unreadable: 0 };
  for await (const batch of sealedBatches(db, req.electionId, batchSize, req.shredKey)) {
    for (const sealed of batch) {
      try {
        openAndCount(key, sealed, tally.counts);
      } catch (e) {
        if (!(e instanceof BallotUnreadable)) throw e;
        tally.unreadable++;
      }
      tally.ballots++;
    }
  }
  return tally;
}
