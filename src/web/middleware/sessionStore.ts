import session from 'express-session';
import type { Knex } from 'knex';
import {
  deleteSession,
  readSession,
  touchSession,
  writeSession,
} from '../../accounts/sessionRepo.ts';

type Callback = (err?: unknown, value?: unknown) => void;

/** express-session store on our own sessions table, so every app server shares sessions. */
export class DatabaseSessionStore extends session.Store {
  constructor(
    private readonly knex: Knex,
    private readonly now: () => Date,
    private readonly idleMs: number,
  ) {
    super();
  }

  /** Idle expiry from the injected clock (the cookie's own date comes from the wall clock). */
  private expiry(_sess: session.SessionData): Date {
    return new Date(this.now().getTime() + this.idleMs);
  }

  override get(sid: string, cb: (err: unknown, sess?: session.SessionData | null) => void): void {
    readSession(this.knex, sid, this.now()).then(
      (data) => cb(null, (data as session.SessionData | null) ?? null),
      (err) => cb(err),
    );
  }

  override set(sid: string, sess: session.SessionData, cb?: Callback): void {
    writeSession(this.knex, sid, sess, this.expiry(sess)).then(
      () => cb?.(),
      (err) => cb?.(err),
    );
  }

  override touch(sid: string, sess: session.SessionData, cb?: Callback): void {
    touchSession(this.knex, sid, this.expiry(sess)).then(
      () => cb?.(),
      (err) => cb?.(err),
    );
  }

  override destroy(sid: string, cb?: Callback): void {
    deleteSession(this.knex, sid).then(
      () => cb?.(),
      (err) => cb?.(err),
    );
  }
}
