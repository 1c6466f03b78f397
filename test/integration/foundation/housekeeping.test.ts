import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import pino from 'pino';
import { jobs, startHousekeeping } from '../../../src/housekeeping.ts';
import { writeSession } from '../../../src/accounts/sessionRepo.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testClock, testContext } from '../../helpers/context.ts';

describe.each(engines)('housekeeping [%s]', (engine) => {
  let db: TestDatabase;
  beforeAll(async () => {
    db = await freshDatabase(engine);
  });
  afterAll(() => db.dispose());

  it('runs every job at start: expired sessions go, live ones stay', async () => {
    const clock = testClock('2026-06-01T12:00:00Z');
    await writeSession(db.knex, 'old-session', { a: 1 }, new Date('2026-06-01T11:00:00Z'));
    await writeSession(db.knex, 'live-session', { a: 2 }, new Date('2026-06-01T13:00:00Z'));
    const lines: string[] = [];
    const logger = pino({ level: 'info' }, { write: (l: string) => void lines.push(l) });
    const hk = startHousekeeping(testContext(db, { now: clock.now }), logger, 3_600_000);
    await expect.poll(async () => Number((await db.knex('sessions').count({ n: '*' }))[0]?.n), { timeout: 10_000 }).toBe(1);
    hk.stop();
    expect(lines.filter((l) => l.includes('housekeeping job failed'))).toEqual([]);
    expect(jobs.map((j) => j.name)).toContain('shred ballots past their retention');
  });

  it('reports a failing job and still runs the others', async () => {
    const broken = await freshDatabase(engine);
    const ctx = testContext(broken);
    await broken.dispose();
    const lines: string[] = [];
    const logger = pino({ level: 'info' }, { write: (l: string) => void lines.push(l) });
    const hk = startHousekeeping(ctx, logger, 3_600_000);
    await expect.poll(() => lines.filter((l) => l.includes('housekeeping job failed')).length, { timeout: 10_000 }).toBe(jobs.length);
    hk.stop();
  });
});
