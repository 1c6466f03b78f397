import type { Request, RequestHandler, Response } from 'express';
import { ipKeyGenerator } from 'express-rate-limit';
import { RateLimiterMemory, RateLimiterRes } from 'rate-limiter-flexible';
import { TooManyAttempts } from '../errors.ts';

/** Requests one client may send per minute, of any page. */
export const FAIR_SHARE_PER_MINUTE = 3000;
/** Requests one client may have waiting for their turn; the next is refused. */
export const FAIR_SHARE_WAITING = 64;
/** The wait a client refused for a full queue is asked for, in seconds. */
export const FAIR_SHARE_RETRY_AFTER_S = 5;
/** IPv6 clients are grouped by this prefix: one household or site is usually given a /56 (RFC 6177). */
export const FAIR_SHARE_IPV6_PREFIX = 56;

/**
 * The client a request counts against: its address as Express reads it (forwarded only from
 * TRUST_PROXY's proxies), an IPv6 address reduced to its /56 network, an IPv4-mapped one to IPv4.
 */
export function clientKey(req: Pick<Request, 'ip' | 'socket'>): string {
  const address = req.ip ?? req.socket?.remoteAddress;
  return address ? ipKeyGenerator(address, FAIR_SHARE_IPV6_PREFIX) : 'unknown';
}

interface Waiter {
  go: () => void;
}

interface Turns {
  busy: boolean;
  queue: Waiter[];
}

export interface ClientState {
  inFlight: number;
  waiting: number;
}

export interface FairShare extends RequestHandler {
  /** A snapshot of the clients with a request in flight or waiting (for tests and diagnostics). */
  clients(): Map<string, ClientState>;
}

/**
 * Each client's requests are answered one at a time, in the order they came (FIFO): a client with
 * many connections open gets no more of the server's time than one with a single connection, so
 * other people's pages never queue behind one client's burst. Per process, in memory: it bounds
 * the work one client makes this server do, and keeps nothing about a request once it is answered.
 * A waiting request whose client goes away leaves the queue; a request that fails, is answered or
 * whose connection closes gives the turn to the next.
 */
export function fairShare(options: { perMinute?: number; waiting?: number } = {}): FairShare {
  const maxWaiting = options.waiting ?? FAIR_SHARE_WAITING;
  const rate = new RateLimiterMemory({ points: options.perMinute ?? FAIR_SHARE_PER_MINUTE, duration: 60 });
  const turns = new Map<string, Turns>();

  const nextTurn = (key: string, t: Turns) => {
    t.busy = false;
    const waiter = t.queue.shift();
    if (waiter) waiter.go();
    else turns.delete(key);
  };

  const start = (key: string, t: Turns, res: Response, next: () => void) => {
    t.busy = true;
    let released = false;
    const release = () => {
      if (released) return;
      released = true;
      nextTurn(key, t);
    };
    res.once('finish', release);
    res.once('close', release);
    next();
  };

  const handler: RequestHandler = (req, res, next) => {
    const key = clientKey(req);
    rate.consume(key).then(
      () => {
        // Gone while its count was taken: nothing to answer.
        if (res.destroyed || req.socket.destroyed) return;
        const t = turns.get(key) ?? { busy: false, queue: [] };
        turns.set(key, t);
        if (!t.busy) return start(key, t, res, next);
        if (t.queue.length >= maxWaiting) {
          res.set('Retry-After', String(FAIR_SHARE_RETRY_AFTER_S));
          return next(new TooManyAttempts('requests from your address', FAIR_SHARE_RETRY_AFTER_S * 1000));
        }
        // The client went away before its turn: it leaves the queue, and nothing is answered.
        const leave = () => {
          const i = t.queue.indexOf(waiter);
          if (i >= 0) t.queue.splice(i, 1);
        };
        const waiter: Waiter = {
          go: () => {
            res.off('close', leave);
            start(key, t, res, next);
          },
        };
        res.once('close', leave);
        t.queue.push(waiter);
      },
      (e: unknown) => {
        if (!(e instanceof RateLimiterRes)) return next(e);
        res.set('Retry-After', String(Math.max(1, Math.ceil(e.msBeforeNext / 1000))));
        next(new TooManyAttempts('requests from your address', e.msBeforeNext));
      },
    );
  };

  return Object.assign(handler, {
    clients: () => new Map([...turns].map(([k, t]): [string, ClientState] => [k, { inFlight: t.busy ? 1 : 0, waiting: t.queue.length }])),
  });
}
