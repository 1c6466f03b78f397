import { parentPort, workerData } from 'node:worker_threads';
// Direct imports, not custody/index.ts: a worker needs only the opening code, and loading
// Argon2 and zod in every worker would add about half a second to its start.
import { openAndCount, openingKey } from '../custody/ballot.ts';
import { BallotUnreadable } from '../custody/errors.ts';
import { wipe } from '../custody/sodium.ts';

/**
 * A tally worker: opens the sealed ballots it is sent and keeps its own counts, which it
 * hands back once, at 'finish', then wipes its copy of the election secret key.
 * Pure computation; it sees no database and logs nothing.
 */
export interface WorkerSetup {
  publicKey: Uint8Array;
  secretKey: Uint8Array;
  electionId: string;
  optionCount: number;
}
export type ToWorker = { type: 'batch'; data: Uint8Array; lengths: Uint32Array } | { type: 'finish' };
export type FromWorker = { type: 'done' } | { type: 'result'; counts: Uint32Array; ballots: number; unreadable: number };

const port = parentPort!;
const setup = workerData as WorkerSetup;
const key = openingKey(setup.publicKey, setup.secretKey, setup.electionId, setup.optionCount);
const counts = new Uint32Array(setup.optionCount);
let ballots = 0;
let unreadable = 0;

port.on('message', (msg: ToWorker) => {
  if (msg.type === 'batch') {
    let offset = 0;
    for (const len of msg.lengths) {
      try {
        openAndCount(key, msg.data.subarray(offset, offset + len), counts);
      } catch (e) {
        if (!(e instanceof BallotUnreadable)) throw e;
        unreadable++;
      }
      ballots++;
      offset += len;
    }
    port.postMessage({ type: 'done' } satisfies FromWorker);
    return;
  }
  wipe(key.secretKey);
  port.postMessage({ type: 'result', counts, ballots, unreadable } satisfies FromWorker, [counts.buffer]);
  port.close();
});
