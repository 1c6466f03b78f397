import { Worker } from 'node:worker_threads';
import type { EpsilonHelpInput, EpsilonHelpView } from './epsilonHelp.ts';
import type { FromHelpWorker, ToHelpWorker } from './epsilonHelpWorker.ts';
import { Lru, type MemoStats } from './memo.ts';

// Compiled (dist/), the worker is plain JavaScript; from the sources it needs tsx's loader (epsilonHelpWorker.mjs).
const ENTRY = import.meta.url.endsWith('.js')
  ? new URL('./epsilonHelpWorker.js', import.meta.url)
  : new URL('./epsilonHelpWorker.mjs', import.meta.url);

/** How many settings the page remembers: each view is a few kilobytes. */
export const HELP_CACHE_SIZE = 1000;
/** New settings waiting for the worker at once, from all readers; past that the page says it is busy. */
export const HELP_QUEUE_MAX = 8;

export class HelpBusy extends Error {}

/**
 * The "Choosing ε" tables for a reader's settings. The key is the normalised settings (whole numbers
 * and the exact fraction of ε, so "1", "1.0" and "1.00" are one entry); a setting seen before comes
 * from the cache and costs nothing, a new one is worked out on a worker thread, one at a time, and a
 * second request for a setting already being worked out waits for that answer instead of a second.
 * `cold` tells the caller whether this request had to compute, so it can count that per client.
 */
export class EpsilonHelpPages {
  private readonly cache = new Lru<EpsilonHelpView>(HELP_CACHE_SIZE);
  private readonly pending = new Map<string, Promise<EpsilonHelpView>>();
  private readonly waiting = new Map<number, { resolve: (v: EpsilonHelpView) => void; reject: (e: Error) => void }>();
  private worker: Worker | null = null;
  private nextId = 0;

  get stats(): Readonly<MemoStats> {
    return this.cache.stats;
  }

  /** The cached view, or undefined (counted as a miss). */
  cached(key: string): EpsilonHelpView | undefined {
    return this.cache.get(key);
  }

  /** Works out a view not in the cache; throws HelpBusy when too many are already waiting. */
  compute(key: string, input: EpsilonHelpInput): Promise<EpsilonHelpView> {
    const already = this.pending.get(key);
    if (already) return already;
    if (this.pending.size >= HELP_QUEUE_MAX) return Promise.reject(new HelpBusy());
    const job = this.ask(input).then((view) => {
      this.cache.set(key, view);
      return view;
    });
    const settled = job.finally(() => this.pending.delete(key));
    this.pending.set(key, settled);
    return settled;
  }

  private ask(input: EpsilonHelpInput): Promise<EpsilonHelpView> {
    const worker = this.worker ?? this.start();
    const id = this.nextId++;
    return new Promise((resolve, reject) => {
      this.waiting.set(id, { resolve, reject });
      worker.postMessage({ id, input } satisfies ToHelpWorker);
    });
  }

  private start(): Worker {
    const worker = new Worker(ENTRY);
    // The page's worker never keeps the process alive on its own (a stopping server, a finished test).
    worker.unref();
    worker.on('message', (m: FromHelpWorker) => {
      const w = this.waiting.get(m.id);
      if (!w) return;
      this.waiting.delete(m.id);
      if ('view' in m) w.resolve(m.view);
      else w.reject(new Error(m.error));
    });
    const gone = (e: Error) => {
      if (this.worker === worker) this.worker = null;
      for (const w of this.waiting.values()) w.reject(e);
      this.waiting.clear();
    };
    worker.on('error', gone);
    worker.on('exit', () => gone(new Error('the ε help worker stopped')));
    this.worker = worker;
    return worker;
  }

  /** Stops the worker (a test's teardown); the next new setting starts another. */
  async close(): Promise<void> {
    const w = this.worker;
    this.worker = null;
    if (w) await w.terminate();
  }
}
