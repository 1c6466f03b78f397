import session from 'express-session';
import type { Knex } from 'knex';
import { deleteSession, readSessionRow, touchSession, writeSession } from '../../accounts/sessionRepo.ts';

type Callback = (err?: unknown, value?: unknown) => void;

/**
 * A touch that would move the row's expiry by less than this is skipped. express-session (with
 * rolling cookies) touches after every request, which cost a database write on every member
 * step; now the idle timeout runs from the last touch, so it lies between IDLE − 1 min and IDLE.
 */
export const TOUCH_SLACK_MS = 60_000;
/** Bounds the expiries remembered between a request's read and its touch (aborted requests never touch). */
const REMEMBERED_MAX = 10_000;

/** express-session store on our own sessions table, so every app server shares sessions. */
export class DatabaseSessionStore extends session.Store {
  constructor(
    private readonly knex: Knex,
    private readonly now: () => Date,
    private readonly idleMs: number,
  ) {
    super();
  }

  /** Row expiry seen by get(), used by the touch at the end of the same request. */
  private readonly seenExpiry = new Map<string, number>();

  /** Idle expiry from the injected clock (the cookie's own date comes from the wall clock). */
  private expiry(_sess: session.SessionData): Date {
    return new Date(this.now().getTime() + this.idleMs);
  }

  override get(sid: string, cb: (err: unknown, sess?: session.SessionData | null) => void): void {
    readSessionRow(this.knex, sid, this.now()).then(
      (row) => {
        if (row) {
          if (this.seenExpiry.size >= REMEMBERED_MAX) this.seenExpiry.clear();
          this.seenExpiry.set(sid, row.expiresAt.getTime());
        }
        cb(null, (row?.data as session.SessionData | undefined) ?? null);
      },
      (err) => cb(err),
    );
  }

  override set(sid: string, sess: session.SessionData, cb?: Callback): void {
    this.seenExpiry.delete(sid);
    writeSession(this.knex, sid, sess, this.expiry(sess)).then(
      () => cb?.(),
      (err) => cb?.(err),
    );
  }

  override touch(sid: string, sess: session.SessionData, cb?: Callback): void {
    const seen = this.seenExpiry.get(sid);
    this.seenExpiry.delete(sid);
    const expiry = this.expiry(sess);
    if (seen !== undefined && expiry.getTime() - seen < TOUCH_SLACK_MS) {
      cb?.();
      return;
    }
    touchSession(this.knex, sid, expiry).then(
      () => cb?.(),
      (err) => cb?.(err),
    );
  }

  override destroy(sid: string, cb?: Callback): void {
    this.seenExpiry.delete(sid);
    deleteSession(this.knex, sid).then(
      () => cb?.(),
      (err) => cb?.(err),
    );
  }
}
