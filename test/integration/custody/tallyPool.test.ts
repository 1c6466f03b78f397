import { describe, expect, it } from 'vitest';
import { TallyPool } from '../../../src/elections/tallyPool.ts';

/**
 * A tally worker that has already died must fail the tally, never leave it waiting forever
 * while the election row stays locked (common practice: a worker pool reports early deaths).
 */
describe('tally worker pool', () => {
  it('finish() rejects when a worker died before it was called', async () => {
    // "not-a-uuid" makes the worker throw while it starts (uuidBytes), so it exits at once.
    const pool = new TallyPool(1, { publicKey: new Uint8Array(32), electionId: 'not-a-uuid', optionCount: 3 }, new Uint8Array(32));
    try {
      const died = await new Promise<boolean>((resolve) => {
        const worker = (pool as unknown as { slots: Array<{ worker: import('node:worker_threads').Worker }> }).slots[0]!.worker;
        worker.once('exit', () => resolve(true));
        setTimeout(() => resolve(false), 20_000);
      });
      expect(died).toBe(true); // control: the worker really is gone before finish()
      const outcome = await Promise.race([
        pool.finish(3).then(
          () => 'resolved',
          () => 'rejected',
        ),
        new Promise((resolve) => setTimeout(() => resolve('still waiting'), 3_000)),
      ]);
      expect(outcome).toBe('rejected');
    } finally {
      await pool.close();
    }
  }, 30_000);
});
