import { Router, type Request, type RequestHandler, type Response } from 'express';
import { RateLimiterMemory, RateLimiterRes } from 'rate-limiter-flexible';
import { z } from 'zod';
import { EPSILON_RULE, parseEpsilon } from '../../../mechanism/index.ts';
import { TooManyAttempts } from '../../errors.ts';
import { HELP_MAX_OPTIONS, type EpsilonHelpInput } from '../../presenters/epsilonHelp.ts';
import { EpsilonHelpPages, HelpBusy } from '../../presenters/epsilonHelpPages.ts';
import { Lru } from '../../presenters/memo.ts';

export const HELP_DRAWN_PATH = '/help/how-the-result-is-drawn';
export const HELP_EPSILON_PATH = '/help/choosing-epsilon';

/** New settings one client may have worked out per minute. */
export const HELP_NEW_SETTINGS_PER_MINUTE = 20;
/** ε pages of any settings one client may read per minute: a person trying settings reads a few. */
export const HELP_PAGES_PER_MINUTE = 60;
/** Requests for the page one client may have waiting for their turn. */
export const HELP_WAITING_PER_CLIENT = 32;

const whole = (min: number, max: number, fallback: number) =>
  z.preprocess(
    (v) => (v === undefined || v === '' ? String(fallback) : v),
    z
      .string()
      .regex(/^[0-9]{1,3}$/)
      .transform(Number)
      .pipe(z.number().int().min(min).max(max)),
  );

/** "1.50" and "1.5" are one setting: ε's text without trailing zeros (parseEpsilon's format has no other variants). */
const canonicalEpsilon = (text: string) => text.replace(/(\.[0-9]*?)0+$/, '$1').replace(/\.$/, '');

/** The settings a reader may try on the ε page; anything else falls back to a message and the defaults. */
const epsilonQuery = z
  .object({
    options: whole(2, HELP_MAX_OPTIONS, 6),
    seats: whole(1, HELP_MAX_OPTIONS - 1, 1),
    epsilon: z.preprocess((v) => (v === undefined || v === '' ? '1' : v), z.string().max(16)),
  })
  .strip();

const DEFAULTS: EpsilonHelpInput = { options: 6, seats: 1, epsilon: '1' };
const keyOf = (i: EpsilonHelpInput) => `${i.options}:${i.seats}:${i.epsilon}`;

/** One shared cache and worker for every app in the process: the tables depend on nothing but the settings. */
export const epsilonHelpPages = new EpsilonHelpPages();
/**
 * Anonymous readers all get the same page for the same settings: it is kept as rendered, so a repeated
 * setting costs a lookup, not a render. Signed-in organisers see their own header, so theirs is rendered.
 */
export const renderedHelpPages = new Lru<string>(200);

function readSettings(query: unknown): { input: EpsilonHelpInput; problem: string | null } {
  const parsed = epsilonQuery.safeParse(query);
  if (!parsed.success) {
    return {
      input: DEFAULTS,
      problem: `Options must be a whole number from 2 to ${HELP_MAX_OPTIONS}, and seats from 1 to one fewer than the options.`,
    };
  }
  if (parsed.data.seats >= parsed.data.options) return { input: DEFAULTS, problem: 'There must be fewer seats than options.' };
  try {
    parseEpsilon(parsed.data.epsilon);
  } catch {
    return { input: DEFAULTS, problem: `ε: ${EPSILON_RULE}` };
  }
  return { input: { ...parsed.data, epsilon: canonicalEpsilon(parsed.data.epsilon) }, problem: null };
}

/** Help pages: plain words first, then the mathematics with citations. Public, no session, no forms that post. */
export function helpRouter(): Router {
  const router = Router();
  // In memory, per process: this bounds the work one client makes this server do, not a secret's guesses.
  const newSettings = new RateLimiterMemory({ points: HELP_NEW_SETTINGS_PER_MINUTE, duration: 60 });
  const clientOf = (req: Request) => req.ip ?? req.socket.remoteAddress ?? 'unknown';

  router.get('/help', (_req, res) => {
    res.render('help/index', { title: 'Help', pages: { drawn: HELP_DRAWN_PATH, epsilon: HELP_EPSILON_PATH } });
  });

  router.get(HELP_DRAWN_PATH, (_req, res) => {
    res.render('help/how-drawn', { title: 'How the result is drawn' });
  });

  const pages = new RateLimiterMemory({ points: HELP_PAGES_PER_MINUTE, duration: 60 });
  const refuse = (res: Response, e: RateLimiterRes, what: string) => {
    res.set('Retry-After', String(Math.max(1, Math.ceil(e.msBeforeNext / 1000))));
    return new TooManyAttempts(what, e.msBeforeNext);
  };

  // One client's requests for this page are answered one at a time, in turn: a client with many
  // connections open gets no more of the server's time than one with a single connection, so others'
  // pages never queue behind its whole burst. Past HELP_WAITING_PER_CLIENT waiting, it is refused.
  const turns = new Map<string, { tail: Promise<void>; waiting: number }>();
  const waitTurn: RequestHandler = (req, res, next) => {
    const client = clientOf(req);
    const turn = turns.get(client) ?? { tail: Promise.resolve(), waiting: 0 };
    if (turn.waiting >= HELP_WAITING_PER_CLIENT) {
      res.set('Retry-After', '5');
      return next(new TooManyAttempts('pages of settings at once', 5000));
    }
    turn.waiting++;
    turns.set(client, turn);
    const previous = turn.tail;
    let done!: () => void;
    turn.tail = new Promise<void>((resolve) => (done = resolve));
    const release = () => {
      done();
      if (--turn.waiting === 0) turns.delete(client);
    };
    res.once('finish', release);
    res.once('close', () => {
      if (!res.writableFinished) release();
    });
    void previous.then(() => next());
  };

  router.get(HELP_EPSILON_PATH, waitTurn, async (req, res, next) => {
    try {
      await pages.consume(clientOf(req));
    } catch (e) {
      if (e instanceof RateLimiterRes) throw refuse(res, e, 'pages of settings');
      throw e;
    }
    const { input, problem } = readSettings(req.query);
    const key = keyOf(input);
    const status = problem ? 400 : 200;
    const pageKey = `${key}\u0000${problem ?? ''}`;
    const anonymous = !req.session?.organiserId;
    const html = anonymous ? renderedHelpPages.get(pageKey) : undefined;
    if (html !== undefined) return res.status(status).type('html').send(html);
    let view = epsilonHelpPages.cached(key);
    if (!view) {
      try {
        await newSettings.consume(clientOf(req));
      } catch (e) {
        if (e instanceof RateLimiterRes) throw refuse(res, e, 'new settings on this page');
        throw e;
      }
      try {
        view = await epsilonHelpPages.compute(key, input);
      } catch (e) {
        if (!(e instanceof HelpBusy)) throw e;
        res.set('Retry-After', '5');
        throw new TooManyAttempts('new settings on this page from everyone at once', 5000);
      }
    }
    res.status(status).render('help/choosing-epsilon', { title: 'Choosing ε', view, problem }, (err: Error | null, out?: string) => {
      if (err) return next(err);
      if (anonymous) renderedHelpPages.set(pageKey, out!);
      res.send(out);
    });
  });

  return router;
}
