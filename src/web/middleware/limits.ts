import { limitKeyHash } from '../../custody/keyedHash.ts';
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
  /**
   * A shared ceiling (one account, one election) that every client adds to. Rules are counted in
   * order and a ceiling comes last: a client past its own allowance adds nothing more to the
   * ceiling, so no single client can fill it and lock the others out.
   */
  readonly ceiling?: boolean;
}

const clientOf: KeyOf = (req) => req.ip ?? req.socket.remoteAddress ?? 'unknown';
/** Election ids are UUIDs, which PostgreSQL compares case-blind: key on the canonical lower-case form. */
const electionOf: KeyOf = (req) => (typeof req.params?.id === 'string' ? req.params.id.slice(0, 64).toLowerCase() : null);
const emailOf: KeyOf = (req) => {
  const v = (req.body as Record<string, unknown> | undefined)?.email;
  return typeof v === 'string' && v.length <= 254 ? v.trim().toLowerCase() : null;
};
const both =
  (a: KeyOf, b: KeyOf): KeyOf =>
  (req) => {
    const x = a(req);
    const y = b(req);
    return x && y ? `${x}\u0000${y}` : null;
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
 * the failure is answered only with "wait")? The first call counts this failure in the database and
 * answers from that count; null outside such a limit.
 */
export async function lockedOut(res: Response): Promise<LockedOut | null> {
  const check = res.locals[LOCKED_OUT_CHECK] as (() => Promise<LockedOut | null>) | undefined;
  return check ? check() : null;
}

/**
 * Clients that have succeeded before (a sign-in from this address to this account), remembered
 * for `windowMs`: a shared ceiling does not apply to them, so whoever fills an account's ceiling
 * from elsewhere cannot keep its owner out (NIST SP 800-63B §5.2.2 names this: accept attempts
 * from addresses the subscriber has authenticated from before).
 */
interface Known {
  readonly name: string;
  readonly windowMs: number;
  readonly key: KeyOf;
}

interface Key {
  rule: Rule;
  store: RateLimiterPostgres;
  key: string;
}

const isLimiterAnswer = (e: unknown): e is RateLimiterRes => !(e instanceof Error) && typeof e === 'object' && e !== null && 'msBeforeNext' in e;

export class AttemptLimit {
  private readonly limiters: Array<{ rule: Rule; store: RateLimiterPostgres }>;
  private readonly known: { rule: Known; store: RateLimiterPostgres } | null;

  constructor(
    knex: Knex,
    private readonly what: string,
    private readonly mode: Mode,
    rules: readonly Rule[],
    /** Keys hold addresses and e-mail addresses: rows store only this keyed hash of them. */
    private readonly hashed: (value: string) => string,
    known?: Known,
  ) {
    const storeClient = knexStoreClient(knex);
    const storeFor = (name: string, points: number, windowMs: number) =>
      new RateLimiterPostgres({
        storeClient,
        storeType: 'pool',
        tableName: RATE_LIMIT_TABLE,
        tableCreated: true, // made by a migration
        keyPrefix: name,
        points,
        duration: Math.ceil(windowMs / 1000),
      });
    this.limiters = rules.map((rule) => ({ rule, store: storeFor(rule.name, rule.points, rule.windowMs) }));
    this.known = known ? { rule: known, store: storeFor(known.name, Number.MAX_SAFE_INTEGER, known.windowMs) } : null;
  }

  /**
   * The keys of this request, taken when it arrives: Express 5 clears route parameters once the
   * router is done, so a count made when the answer ends must not read them again.
   */
  private keys(req: Request): Key[] {
    return this.limiters.flatMap(({ rule, store }) => {
      const k = rule.key(req);
      return k ? [{ rule, store, key: this.hashed(k) }] : [];
    });
  }

  /**
   * One failure, counted in rule order, each an atomic increment in the database; once a
   * client's own allowance is passed, the shared ceilings after it are left alone. Answers the
   * longest wait among the allowances this failure went past (0: none), so the decision rests on
   * the increment's own result and concurrent failures cannot all see the same earlier count.
   */
  private async countFailure(keys: readonly Key[]): Promise<number> {
    let wait = 0;
    for (const { rule, store, key } of keys) {
      const r = await store.penalty(key, 1);
      if (r.consumedPoints > rule.points) {
        wait = Math.max(wait, r.msBeforeNext);
        if (!rule.ceiling) return wait;
      }
    }
    return wait;
  }

  private refuse(res: Response, next: (e: unknown) => void, retryAfterMs: number) {
    res.set('Retry-After', String(Math.max(1, Math.ceil(retryAfterMs / 1000))));
    next(new TooManyAttempts(this.what, retryAfterMs));
  }

  private async isKnown(req: Request): Promise<boolean> {
    const k = this.known?.rule.key(req);
    return Boolean(k && (await this.known!.store.get(this.hashed(k))));
  }

  private async remember(req: Request): Promise<void> {
    const k = this.known?.rule.key(req);
    if (k) await this.known!.store.set(this.hashed(k), 1, Math.ceil(this.known!.rule.windowMs / 1000));
  }

  readonly middleware: RequestHandler = async (req, res, next) => {
    const keys = this.keys(req);
    if (this.mode === 'every') {
      try {
        for (const { store, key } of keys) await store.consume(key, 1);
        return next();
      } catch (e) {
        if (!isLimiterAnswer(e)) return next(e);
        return this.refuse(res, next, e.msBeforeNext);
      }
    }
    if (this.mode === 'failures-only') {
      // Counted only once the attempt has failed, never on success: a correct cast costs the limit
      // nothing. (Counting every attempt first and handing successes back made each cast write the
      // same two rows twice more, so concurrent casts queued on those row locks: README, Performance.)
      // The failure is counted when the error handler asks whether to answer "wait" (lockedOut), and
      // that answer comes from the atomic increment itself, so a burst sent at once gets at most the
      // allowance of "wrong code" answers. A client past its own allowance adds nothing to the
      // election's, so one address never locks a ballot for others.
      let counted: Promise<number> | undefined;
      const count = () => (counted ??= this.countFailure(keys));
      res.locals[LOCKED_OUT_CHECK] = () => count().then((wait) => (wait > 0 ? { what: this.what, retryAfterMs: wait } : null));
      // A failure nobody asked about is still counted; the answer waits for its count, so the
      // client's next attempt sees it.
      const end = res.end.bind(res) as (...args: unknown[]) => Response;
      res.end = ((...args: unknown[]) => {
        if (res.statusCode < 400) return end(...args);
        count()
          .catch(() => 0)
          .finally(() => end(...args));
        return res;
      }) as Response['end'];
      return next();
    }
    // 'refuse': reserve, then check. Each attempt takes its point with one atomic increment
    // (INSERT … ON CONFLICT DO UPDATE … RETURNING) before the expensive check runs, and is refused
    // when that point is past the allowance, so a burst sent at once cannot all be checked.
    // A success hands its points back: in effect only failures count.
    try {
      const known = keys.some((k) => k.rule.ceiling) && (await this.isKnown(req));
      const taken: Key[] = [];
      for (const k of keys) {
        if (k.rule.ceiling && known) continue;
        try {
          await k.store.consume(k.key, 1);
          taken.push(k);
        } catch (e) {
          if (!isLimiterAnswer(e)) throw e;
          // Stops here: a refused attempt adds nothing to the ceilings after its own allowance.
          return this.refuse(res, next, e.msBeforeNext);
        }
      }
      res.on('finish', () => {
        if (res.statusCode >= 400) return;
        Promise.all([...taken.map(({ store, key }) => store.reward(key, 1)), this.remember(req)]).catch(() => undefined);
      });
      next();
    } catch (e) {
      next(e);
    }
  };
}

export interface Limits {
  readonly codeAttempts: RequestHandler;
  readonly signInAttempts: RequestHandler;
  readonly passphraseAttempts: RequestHandler;
  readonly receiptChecks: RequestHandler;
  /** The home page's code box, which tries each code against every open election at once. */
  readonly codeLookups: RequestHandler;
  /** "Lost your code?" on a roster election's ballot page: every request counts. */
  readonly replacementRequests: RequestHandler;
}

/**
 * Replacement requests: every request counts, whatever the address, so the limit says nothing
 * about the roster. Per client it allows a few typing mistakes; per election it bounds the
 * database work and the mail one election can cause from many clients (each member can be sent at
 * most one replacement anyway, so it bounds load, not what any request can get).
 */
export const REPLACEMENT_LIMITS = Object.freeze({ perClient: 10, perElection: 1000, windowMs: 60 * 60_000 });

const MIN = 60_000;

/**
 * The numbers are our choice, following OWASP's Authentication Cheat Sheet (throttle failed
 * attempts, per account and per source): a whole meeting may share one address, so per-address
 * allowances are generous where a person's own key (account, election) is the tight one.
 */
export function createLimits(knex: Knex, pepper: Uint8Array): Limits {
  const hashed = (value: string) => limitKeyHash(pepper, value);
  return {
    codeAttempts: new AttemptLimit(
      knex,
      'ballot code attempts',
      'failures-only',
      [
        { name: 'code-client', points: 300, windowMs: 10 * MIN, key: clientOf },
        { name: 'code-election', points: 3000, windowMs: 10 * MIN, key: electionOf, ceiling: true },
      ],
      hashed,
    ).middleware,
    // Per (address, account) is the tight limit, so guessing from elsewhere never locks the owner's
    // own address; the account's ceiling (NIST SP 800-63B §5.2.2: at most 100 consecutive failures
    // per account) binds many addresses together, and spares an address the owner signed in from
    // within the last 30 days.
    signInAttempts: new AttemptLimit(
      knex,
      'sign-in attempts',
      'refuse',
      [
        { name: 'signin-client-account', points: 10, windowMs: 15 * MIN, key: both(clientOf, emailOf) },
        { name: 'signin-client', points: 100, windowMs: 15 * MIN, key: clientOf },
        { name: 'signin-account', points: 100, windowMs: 15 * MIN, key: emailOf, ceiling: true },
      ],
      hashed,
      { name: 'signin-known', windowMs: 30 * 24 * 60 * MIN, key: both(clientOf, emailOf) },
    ).middleware,
    passphraseAttempts: new AttemptLimit(
      knex,
      'tally passphrase attempts',
      'refuse',
      [
        { name: 'passphrase-client-election', points: 10, windowMs: 15 * MIN, key: both(clientOf, electionOf) },
        { name: 'passphrase-client', points: 50, windowMs: 15 * MIN, key: clientOf },
        { name: 'passphrase-election', points: 100, windowMs: 15 * MIN, key: electionOf, ceiling: true },
      ],
      hashed,
    ).middleware,
    receiptChecks: new AttemptLimit(
      knex,
      'receipt checks',
      'every',
      [{ name: 'receipt-client', points: 1000, windowMs: 10 * MIN, key: clientOf }],
      hashed,
    ).middleware,
    // One failed look-up is one guess against every open election. It counts per address only: a
    // site-wide allowance let one address's refused guesses lock the box for everyone.
    codeLookups: new AttemptLimit(
      knex,
      'ballot code attempts',
      'failures-only',
      [{ name: 'lookup-client', points: 300, windowMs: 10 * MIN, key: clientOf }],
      hashed,
    ).middleware,
    replacementRequests: new AttemptLimit(
      knex,
      'requests for a replacement code',
      'every',
      [
        {
          name: 'replace-client-election',
          points: REPLACEMENT_LIMITS.perClient,
          windowMs: REPLACEMENT_LIMITS.windowMs,
          key: both(clientOf, electionOf),
        },
        { name: 'replace-election', points: REPLACEMENT_LIMITS.perElection, windowMs: REPLACEMENT_LIMITS.windowMs, key: electionOf, ceiling: true },
      ],
      hashed,
    ).middleware,
  };
}
