import { availableParallelism } from 'node:os';
import { setImmediate as yieldTurn } from 'node:timers/promises';
import { BallotUnreadable, encodeAndSeal, openAndCount, openingKey } from '../custody/index.ts';
import type { Db } from '../db/knex.ts';
import { sealedBatches } from './ballotRepo.ts';
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
  /**
   * The work is padded to this many ballots (the codes issued): after the stored ballots, a dummy
   * ballot sealed to the same key, approving nothing, is opened and counted until this many have
   * been, so the work does not depend on turnout. Dummies add nothing to the counts.
   */
  padTo?: number;
  /** Rows per keyset page: each page is one short read, and the connection is given back between pages. */
  batchSize?: number;
  /** Worker threads: 0 counts in this thread; 'auto' uses one worker, all cores once the padded count is large. */
  threads?: number | 'auto';
}

export interface ApprovalTally {
  /** counts[i] = ballots approving option position i. */
  counts: Uint32Array;
  /** Stored ballots examined (readable or not). */
  ballots: number;
  /** Ciphertexts opened, the dummies included: max(padTo, ballots), whatever the turnout. */
  opened?: number;
  unreadable: number;
}

export const DEFAULT_BATCH = 200;
/**
 * Below this, starting worker threads costs more than it saves: a worker needs about 0.5 to
 * 0.7 s to start (loading TypeScript through tsx) and one core opens about 18 000 to 27 000
 * sealed ballots a second (measured with test/bench/tally.bench.ts on the 2-core dev machine).
 */
export const PARALLEL_FROM = 50_000;

/** 'auto' decides from the padded count (codes issued), never from turnout; it always counts off the main thread. */
export function chooseThreads(threads: CountRequest['threads'], padded: number): number {
  if (typeof threads === 'number') return Math.max(0, Math.floor(threads));
  const cores = availableParallelism();
  return padded >= PARALLEL_FROM && cores >= 2 ? cores : 1;
}

/**
 * The stored ballots in pages, then the dummy ballot until `padTo` have been handed out, in pages of
 * the same size; between pages the event loop turns, so other requests' queries take the connection
 * (PGlite has one) and their handlers run. `real` tells the caller how many were stored ballots.
 */
async function* paddedBatches(db: Db, req: CountRequest, batchSize: number, real: { n: number }): AsyncGenerator<Buffer[]> {
  for await (const batch of sealedBatches(db, req.electionId, batchSize, req.shredKey)) {
    real.n += batch.length;
    yield batch;
    await yieldTurn();
  }
  let dummies = Math.max(0, (req.padTo ?? 0) - real.n);
  if (dummies === 0) return;
  const dummy = encodeAndSeal(req.publicKey, req.electionId, req.optionCount, []);
  while (dummies > 0) {
    const k = Math.min(batchSize, dummies);
    dummies -= k;
    yield new Array<Buffer>(k).fill(dummy);
    await yieldTurn();
  }
}

/**
 * Streams the sealed ballots (memory O(d + batch)) and counts them, padded to `padTo`, in workers
 * (or in this thread when asked for 0). `ballots` counts the stored ballots only.
 */
export async function countApprovals(db: Db, req: CountRequest): Promise<ApprovalTally> {
  const batchSize = req.batchSize ?? DEFAULT_BATCH;
  const threads = chooseThreads(req.threads ?? 'auto', req.padTo ?? 0);
  const real = { n: 0 };
  const tally = threads === 0 ? await countHere(db, req, batchSize, real) : await countInWorkers(db, req, batchSize, real, threads);
  tally.opened = tally.ballots;
  tally.ballots = real.n; // the dummies were opened and counted, but are no ballots
  return tally;
}

async function countInWorkers(db: Db, req: CountRequest, batchSize: number, real: { n: number }, threads: number): Promise<ApprovalTally> {
  const pool = new TallyPool(
    threads,
    { publicKey: new Uint8Array(req.publicKey), electionId: req.electionId, optionCount: req.optionCount },
    req.secretKey,
  );
  try {
    for await (const batch of paddedBatches(db, req, batchSize, real)) await pool.submit(batch);
    return await pool.finish(req.optionCount);
  } finally {
    await pool.close();
  }
}

async function countHere(db: Db, req: CountRequest, batchSize: number, real: { n: number }): Promise<ApprovalTally> {
  const key = openingKey(req.publicKey, req.secretKey, req.electionId, req.optionCount);
  const tally: ApprovalTally = { counts: new Uint32Array(req.optionCount), ballots: 0, unreadable: 0 };
  try {
    for await (const batch of paddedBatches(db, req, batchSize, real)) {
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
  } catch (err) {
    tally.counts.fill(0); // a count stopped part-way is zeroed before it is dropped, as a finished one is by the caller
    throw err;
  }
  return tally;
}
