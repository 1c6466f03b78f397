import crypto from 'node:crypto';
import type { Request, RequestHandler, Response } from 'express';
import type { Knex } from 'knex';
import { RateLimiterPostgres, type RateLimiterRes } from 'rate-limiter-flexible';
import { TooManyAttempts } from '../errors.ts';

/**
 * Attempt limits kept in the database (table rate_limits), so every app server sharing it sees the
 * same counts and a restart forgets nothing. rate-limiter-flexible's PostgreSQL store does the
 * counting; it reaches the database through knex.raw, which works on PostgreSQL and PGlite alike.
 * Each limit counts per client address and per target (an election, an account), so one address
 * cannot lock a whole room out, and many addresses cannot hammer one target unseen.
 */
export const RATE_LIMIT_TABLE = 'rate_limits';

/** The store speaks `query({ text, values })` with $n placeholders; knex.raw wants ? in order. */
function knexStoreClient(knex: Knex) {
  return {
    async query(q: { text: string; values?: unknown[] }) {
      const values = q.values ?? [];
      const bindings: unknown[] = [];
      const sql = q.text.replace(/\$(\d+)/g, (_m, n: string) => {
        bindings.push(values[Number(n) - 1]);
        return '?';
      });
      const r = (await knex.raw(sql, bindings as Knex.RawBinding[])) as { rows?: Array<Record<string, unknown>>; rowCount?: number };
      // bigint comes back as a JS bigint from PGlite and as a number from pg (see db/knex.ts).
      const rows = (r.rows ?? []).map((row) => Object.fromEntries(Object.entries(row).map(([k, v]) => [k, typeof v === 'bigint' ? Number(v) : v])));
      // PGlite reports affected rows only, 0 for a SELECT: count returned rows when there are any.
      return { rows, rowCount: rows.length > 0 ? rows.length : (r.rowCount ?? 0) };
    },
  };
}

type KeyOf = (req: Request) => string | null | undefined;

interface Rule {
  /** Stored in clear before the hashed key, so an operator can see which limit a row belongs to. */
  readonly name: string;
  readonly points: number;
  readonly windowMs: number;
  readonly key: KeyOf;
}

/** Keys hold addresses and e-mail addresses: store only a hash of them. */
const hashed = (value: string) => crypto.createHash('sha256').update(value).digest('base64url').slice(0, 32);

const clientOf: KeyOf = (req) => req.ip ?? req.socket.remoteAddress ?? 'unknown';
const electionOf: KeyOf = (req) => (typeof req.params?.id === 'string' ? req.params.id.slice(0, 64) : null);
const emailOf: KeyOf = (req) => {
  const v = (req.body as Record<string, unknown> | undefined)?.email;
  return typeof v === 'string' && v.length <= 254 ? v.trim().toLowerCase() : null;
};

/**
 * How a limit acts once reached:
 * - 'refuse': every attempt is refused until the wait is over (passwords, passphrases).
 * - 'failures-only': a correct attempt still passes, only failures are answered "wait" (ballot codes:
 *   80 random bits (128 in older codes) cannot be guessed, so the limit bounds load and must never stop a real member).
 * - 'every': every request counts, not only failures (receipt checks).
 */
type Mode = 'refuse' | 'failures-only' | 'every';

export interface LockedOut {
  readonly what: string;
  readonly retryAfterMs: number;
}

const LOCKED_OUT_CHECK = 'lockedOutCheck';

/**
 * Behind a failures-only limit, after the attempt has failed: is this client past the limit (then
 * the failure is answered only with "wait")? Read from the database on the first call, before this
 * failure is counted; null outside such a limit.
 */
export async function lockedOut(res: Response): Promise<LockedOut | null> {
  const check = res.locals[LOCKED_OUT_CHECK] as (() => Promise<LockedOut | null>) | undefined;
  return check ? check() : null;
}

export class AttemptLimit {
  private readonly limiters: Array<{ rule: Rule; store: RateLimiterPostgres }>;

  constructor(
    knex: Knex,
    private readonly what: string,
    private readonly mode: Mode,
    rules: readonly Rule[],
  ) {
    const storeClient = knexStoreClient(knex);
    this.limiters = rules.map((rule) => ({
      rule,
      store: new RateLimiterPostgres({
        storeClient,
        storeType: 'pool',
        tableName: RATE_LIMIT_TABLE,
        tableCreated: true, // made by a migration
        keyPrefix: rule.name,
        points: rule.points,
        duration: Math.ceil(rule.windowMs / 1000),
      }),
    }));
  }

  private keys(req: Request) {
    return this.limiters.flatMap(({ rule, store }) => {
      const k = rule.key(req);
      return k ? [{ rule, store, key: hashed(k) }] : [];
    });
  }

  /** The longest wait among the limits this request has used up, or 0. */
  private async lockedFor(req: Request): Promise<number> {
    let wait = 0;
    const keys = this.keys(req);
    const seen = await Promise.all(keys.map(({ store, key }) => store.get(key)));
    seen.forEach((r, i) => {
      if (r && r.consumedPoints >= keys[i]!.rule.points) wait = Math.max(wait, r.msBeforeNext);
    });
    return wait;
  }

  private async count(req: Request, points: number): Promise<void> {
    await Promise.all(this.keys(req).map(({ store, key }) => (points > 0 ? store.penalty(key, points) : store.reward(key, -points))));
  }

  private refuse(res: Response, next: (e: unknown) => void, retryAfterMs: number) {
    res.set('Retry-After', String(Math.max(1, Math.ceil(retryAfterMs / 1000))));
    next(new TooManyAttempts(this.what, retryAfterMs));
  }

  readonly middleware: RequestHandler = async (req, res, next) => {
    if (this.mode === 'every') {
      try {
        for (const { store, key } of this.keys(req)) await store.consume(key, 1);
        return next();
      } catch (e) {
        if (e instanceof Error) return next(e);
        return this.refuse(res, next, (e as RateLimiterRes).msBeforeNext);
      }
    }
    if (this.mode === 'failures-only') {
      // Whether this client is past the limit matters only once its attempt has failed, so it is
      // read then (lockedOut below), never on success: a correct cast costs the limit nothing.
      let check: Promise<LockedOut | null> | undefined;
      const lockedOutNow = () => (check ??= this.lockedFor(req).then((wait) => (wait > 0 ? { what: this.what, retryAfterMs: wait } : null)));
      res.locals[LOCKED_OUT_CHECK] = lockedOutNow;
      // Counted once known to have failed. Counting every attempt first and handing successes
      // back made each cast write the same two rows (the election's, the meeting's address) twice
      // more, so concurrent casts queued on those row locks (README, Performance). The cost: a
      // burst sent at once can pass the allowance by its own size, which for 128-bit codes still
      // bounds load, the reason this limit exists.
      // The answer to a failure waits for its count, so the client's next attempt sees it.
      const end = res.end.bind(res) as (...args: unknown[]) => Response;
      res.end = ((...args: unknown[]) => {
        if (res.statusCode < 400) return end(...args);
        this.count(req, 1)
          .catch(() => undefined)
          .finally(() => end(...args));
        return res;
      }) as Response['end'];
      return next();
    }
    const wait = await this.lockedFor(req);
    if (wait > 0) return this.refuse(res, next, wait);
    // Every attempt is counted before it runs (so the next request sees it, on any app server),
    // and handed back once it turns out to have succeeded: in effect only failures count.
    await this.count(req, 1);
    res.on('finish', () => {
      if (res.statusCode < 400) this.count(req, -1).catch(() => undefined);
    });
    next();
  };
}

export interface Limits {
  readonly codeAttempts: RequestHandler;
  readonly signInAttempts: RequestHandler;
  readonly passphraseAttempts: RequestHandler;
  readonly receiptChecks: RequestHandler;
  /** The home page's code box, which tries each code against every open election at once. */
  readonly codeLookups: RequestHandler;
}

const MIN = 60_000;

/**
 * The numbers are our choice, following OWASP's Authentication Cheat Sheet (throttle failed
 * attempts, per account and per source): a whole meeting may share one address, so per-address
 * allowances are generous where a person's own key (account, election) is the tight one.
 */
export function createLimits(knex: Knex): Limits {
  return {
    codeAttempts: new AttemptLimit(knex, 'ballot code attempts', 'failures-only', [
      { name: 'code-client', points: 300, windowMs: 10 * MIN, key: clientOf },
      { name: 'code-election', points: 3000, windowMs: 10 * MIN, key: electionOf },
    ]).middleware,
    signInAttempts: new AttemptLimit(knex, 'sign-in attempts', 'refuse', [
      { name: 'signin-account', points: 10, windowMs: 15 * MIN, key: emailOf },
      { name: 'signin-client', points: 100, windowMs: 15 * MIN, key: clientOf },
    ]).middleware,
    passphraseAttempts: new AttemptLimit(knex, 'tally passphrase attempts', 'refuse', [
      { name: 'passphrase-election', points: 10, windowMs: 15 * MIN, key: electionOf },
      { name: 'passphrase-client', points: 50, windowMs: 15 * MIN, key: clientOf },
    ]).middleware,
    receiptChecks: new AttemptLimit(knex, 'receipt checks', 'every', [{ name: 'receipt-client', points: 1000, windowMs: 10 * MIN, key: clientOf }])
      .middleware,
    // One failed look-up is one guess against every open election, so the site-wide key gives the
    // same bound per election as 'code-election' does on the ballot steps.
    codeLookups: new AttemptLimit(knex, 'ballot code attempts', 'failures-only', [
      { name: 'lookup-client', points: 300, windowMs: 10 * MIN, key: clientOf },
      { name: 'lookup-site', points: 3000, windowMs: 10 * MIN, key: () => 'site' },
    ]).middleware,
  };
}
