import { Worker } from 'node:worker_threads';
import { wipe } from '../custody/index.ts';
import type { FromWorker, ToWorker, WorkerSetup } from './tallyWorker.ts';

// Compiled (dist/), the worker is plain JavaScript; from the sources it needs tsx's loader (tallyWorker.mjs).
const ENTRY = import.meta.url.endsWith('.js') ? new URL('./tallyWorker.js', import.meta.url) : new URL('./tallyWorker.mjs', import.meta.url);
const IN_FLIGHT = 2; // batches queued per worker: keeps workers busy while memory stays O(batch)

interface Slot {
  worker: Worker;
  inFlight: number;
}

export interface PartialTally {
  counts: Uint32Array;
  ballots: number;
  unreadable: number;
}

/** Worker threads that open ballots in parallel; the caller streams batches in and reads counts out once. */
export class TallyPool {
  private readonly slots: Slot[] = [];
  private waiting: Array<() => void> = [];
  private failure: unknown = null;

  constructor(size: number, setup: Omit<WorkerSetup, 'secretKey'>, secretKey: Uint8Array) {
    for (let i = 0; i < size; i++) {
      // Each worker gets its own copy, moved (not cloned) into it; the worker wipes it.
      const copy = new Uint8Array(secretKey);
      const data: WorkerSetup = { ...setup, secretKey: copy };
      const worker = new Worker(ENTRY, { workerData: data, transferList: [copy.buffer] });
      const slot: Slot = { worker, inFlight: 0 };
      worker.on('message', (m: FromWorker) => {
        if (m.type === 'done') {
          slot.inFlight--;
          this.wake();
        }
      });
      worker.on('error', (e) => this.fail(e));
      // A worker gone before finish() would never answer it: remember that, so finish() throws.
      worker.on('exit', () => this.fail(new Error('tally worker stopped early')));
      this.slots.push(slot);
    }
  }

  private fail(e: unknown): void {
    this.failure ??= e;
    this.wake();
  }

  private wake(): void {
    const w = this.waiting;
    this.waiting = [];
    for (const f of w) f();
  }

  private async freeSlot(): Promise<Slot> {
    for (;;) {
      if (this.failure) throw this.failure;
      let best: Slot | undefined;
      for (const s of this.slots) if (s.inFlight < IN_FLIGHT && (!best || s.inFlight < best.inFlight)) best = s;
      if (best) return best;
      await new Promise<void>((resolve) => this.waiting.push(resolve));
    }
  }

  /** Resolves once a worker has room for the batch (back-pressure on the database reader). */
  async submit(batch: readonly Buffer[]): Promise<void> {
    const slot = await this.freeSlot();
    const lengths = new Uint32Array(batch.length);
    let total = 0;
    batch.forEach((b, i) => {
      lengths[i] = b.length;
      total += b.length;
    });
    const data = new Uint8Array(total);
    let offset = 0;
    for (const b of batch) {
      data.set(b, offset);
      offset += b.length;
    }
    slot.inFlight++;
    slot.worker.postMessage({ type: 'batch', data, lengths } satisfies ToWorker, [data.buffer, lengths.buffer]);
  }

  /** Waits for every worker's counts and adds them up. */
  async finish(optionCount: number): Promise<PartialTally> {
    if (this.failure) throw this.failure;
    const settled = await Promise.allSettled(
      this.slots.map(
        (s) =>
          new Promise<PartialTally>((resolve, reject) => {
            s.worker.on('message', (m: FromWorker) => {
              if (m.type === 'result') resolve(m);
            });
            s.worker.once('error', reject);
            s.worker.once('exit', () => reject(this.failure ?? new Error('tally worker stopped early')));
            s.worker.postMessage({ type: 'finish' } satisfies ToWorker);
          }),
      ),
    );
    const failed = settled.find((r) => r.status === 'rejected');
    if (failed) {
      // The counts of the workers that did answer are zeroed before the failure is passed on.
      for (const r of settled) if (r.status === 'fulfilled') wipe(r.value.counts);
      throw failed.reason;
    }
    const parts = settled.map((r) => (r as PromiseFulfilledResult<PartialTally>).value);
    const total: PartialTally = { counts: new Uint32Array(optionCount), ballots: 0, unreadable: 0 };
    for (const p of parts) {
      p.counts.forEach((c, i) => (total.counts[i]! += c));
      total.ballots += p.ballots;
      total.unreadable += p.unreadable;
      wipe(p.counts);
    }
    return total;
  }

  async close(): Promise<void> {
    await Promise.all(this.slots.map((s) => s.worker.terminate()));
  }
}
