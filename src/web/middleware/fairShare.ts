import type { Request, RequestHandler, Response } from 'express';
import { ipKeyGenerator } from 'express-rate-limit';
import { RateLimiterMemory } from 'rate-limiter-flexible';
import { TooManyAttempts } from '../errors.ts';

/** Server time one client's pages may take per second while other clients are being served: a twentieth. */
export const FAIR_SHARE_MS_PER_SECOND = 50;
/** The least a page is charged, in ms: with others served, a client gets at most 5 pages a second (a reader needs one). */
export const FAIR_SHARE_MIN_CHARGE_MS = 10;
/** Another client answered this recently, or still waiting or in flight, is being served. */
const OTHERS_ACTIVE_MS = 1000;
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
  /** The request in its turn is waiting for the client's pace. */
  pacing: boolean;
  queue: Waiter[];
}

export interface ClientState {
  inFlight: number;
  waiting: number;
  pacing: boolean;
}

export interface FairShare extends RequestHandler {
  /** A snapshot of the clients with a request in flight or waiting (for tests and diagnostics). */
  clients(): Map<string, ClientState>;
}

export interface FairShareOptions {
  msPerSecond?: number;
  minChargeMs?: number;
  waiting?: number;
}

/**
 * Each client's requests are answered one at a time, in the order they came (FIFO), and each is
 * charged the server time it took (at least `minChargeMs`). While other clients are being served, a
 * client that has used its share of this second (`msPerSecond`) waits in its turn for the next
 * second's: it is slowed, never refused. A burst allowance was tried and dropped: spent at full speed
 * while members were reading, it raised their p99 up to 4× (test/reliability/flood.test.ts). So one client flooding any page
 * over many connections has one request in flight and takes about a twentieth of the server from the
 * others, whatever the page costs; alone, a client (a room of members behind one address) is read
 * at full speed. Only a client with `waiting` requests already queued is refused (429).
 * Per process, in memory: it keeps nothing about a request once it is answered but the time it was
 * charged, for a minute. A waiting request whose client goes away leaves the queue; a request that
 * fails, is answered or whose connection closes gives the turn to the next.
 */
export function fairShare(options: FairShareOptions = {}): FairShare {
  const maxWaiting = options.waiting ?? FAIR_SHARE_WAITING;
  const shareMs = options.msPerSecond ?? FAIR_SHARE_MS_PER_SECOND;
  const minChargeMs = options.minChargeMs ?? FAIR_SHARE_MIN_CHARGE_MS;
  const share = new RateLimiterMemory({ points: shareMs, duration: 1 });
  const turns = new Map<string, Turns>();
  // The two clients answered last, most recent first: enough to know whether anyone else was.
  let recent: Array<{ key: string; at: number }> = [];

  const othersActive = (key: string): boolean => {
    if (turns.size > (turns.has(key) ? 1 : 0)) return true;
    const other = recent.find((r) => r.key !== key);
    return other !== undefined && performance.now() - other.at < OTHERS_ACTIVE_MS;
  };

  /** How long the client must wait for its next share, or 0. */
  const waitFor = async (key: string): Promise<number> => {
    const used = await share.get(key);
    return used && used.consumedPoints >= shareMs ? Math.max(1, used.msBeforeNext) : 0;
  };

  const nextTurn = (key: string, t: Turns) => {
    t.busy = false;
    t.pacing = false;
    const waiter = t.queue.shift();
    if (waiter) waiter.go();
    else turns.delete(key);
  };

  const start = (key: string, t: Turns, res: Response, next: (e?: unknown) => void) => {
    t.busy = true;
    let released = false;
    let timer: NodeJS.Timeout | undefined;
    let startedAt: number | undefined;
    const release = () => {
      if (released) return;
      released = true;
      clearTimeout(timer);
      if (startedAt !== undefined) {
        const at = performance.now();
        recent = [{ key, at }, ...recent.filter((r) => r.key !== key)].slice(0, 2);
        void share.penalty(key, Math.max(minChargeMs, Math.ceil(at - startedAt)));
      }
      nextTurn(key, t);
    };
    res.once('finish', release);
    res.once('close', release);
    // In its turn, with others being served, the request waits for the client's next share.
    const go = () => {
      (othersActive(key) ? waitFor(key) : Promise.resolve(0)).then(
        (ms) => {
          if (released) return; // gone while it waited: nothing to answer
          if (ms > 0) {
            t.pacing = true;
            timer = setTimeout(go, ms);
            return;
          }
          t.pacing = false;
          startedAt = performance.now();
          next();
        },
        (e: unknown) => {
          if (!released) next(e);
        },
      );
    };
    go();
  };
  const handler: RequestHandler = (req, res, next) => {
    const key = clientKey(req);
    const t = turns.get(key) ?? { busy: false, pacing: false, queue: [] };
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
  };

  return Object.assign(handler, {
    clients: () =>
      new Map([...turns].map(([k, t]): [string, ClientState] => [k, { inFlight: t.busy ? 1 : 0, waiting: t.queue.length, pacing: t.pacing }])),
  });
}
