import os from 'node:os';
import { parentPort } from 'node:worker_threads';
import { epsilonHelpView, type EpsilonHelpInput } from './epsilonHelp.ts';

/**
 * The worker thread behind the "Choosing ε" page (epsilonHelpPages.ts): the tables take tens to
 * hundreds of milliseconds of exact arithmetic for new settings, and here that time is not spent on
 * the thread that answers every other page, nor taken from it when the cores are busy.
 */
// The lowest CPU priority for this thread alone, so new settings never take time from the pages members are
// waiting for. Only on Linux: there setpriority(2) with pid 0 changes the calling thread, elsewhere the whole process.
if (process.platform === 'linux') {
  try {
    os.setPriority(os.constants.priority.PRIORITY_LOW);
  } catch {
    /* not allowed here: the worker runs at the server's priority */
  }
}

export type ToHelpWorker = { id: number; input: EpsilonHelpInput };
export type FromHelpWorker = { id: number; view: ReturnType<typeof epsilonHelpView> } | { id: number; error: string };

parentPort?.on('message', (m: ToHelpWorker) => {
  try {
    parentPort!.postMessage({ id: m.id, view: epsilonHelpView(m.input) } satisfies FromHelpWorker);
  } catch (e) {
    parentPort!.postMessage({ id: m.id, error: e instanceof Error ? e.message : String(e) } satisfies FromHelpWorker);
  }
});
