import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type session from 'express-session';
import { DatabaseSessionStore, TOUCH_SLACK_MS } from '../../../src/web/middleware/sessionStore.ts';
import { IDLE_MS } from '../../../src/web/middleware/sessions.ts';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testClock } from '../../helpers/context.ts';

const call = <T>(f: (cb: (err: unknown, value?: T) => void) => void) =>
  new Promise<T | undefined>((resolve, reject) => f((err, value) => (err ? reject(err) : resolve(value))));

// express-session touches the store after every request; a touch that would barely move the
// expiry must not cost a database write, yet the idle timeout must still hold.
describe.each(engines)('session store touches [%s]', (engine) => {
  let db: TestDatabase;
  beforeAll(async () => {
    db = await freshDatabase(engine);
  });
  afterAll(async () => {
    await db.dispose();
  });

  const expiryOf = async () => new Date((await db.knex('sessions').first('expires_at')).expires_at).getTime();

  it('skips a touch within the slack, writes one beyond it, and still expires an idle session', async () => {
    const clock = testClock();
    const store = new DatabaseSessionStore(db.knex, clock.now, IDLE_MS);
    const data = { cookie: { originalMaxAge: IDLE_MS } } as unknown as session.SessionData;
    await call((cb) => store.set('sid-one', data, cb));
    const first = await expiryOf();
    expect(first).toBe(clock.now().getTime() + IDLE_MS);

    clock.advance(TOUCH_SLACK_MS / 2);
    await call((cb) => store.get('sid-one', cb));
    await call((cb) => store.touch('sid-one', data, cb));
    expect(await expiryOf()).toBe(first); // no write

    clock.advance(TOUCH_SLACK_MS);
    await call((cb) => store.get('sid-one', cb));
    await call((cb) => store.touch('sid-one', data, cb));
    expect(await expiryOf()).toBe(clock.now().getTime() + IDLE_MS);

    clock.advance(IDLE_MS);
    expect(await call((cb) => store.get('sid-one', cb))).toBeNull();
  });
});
