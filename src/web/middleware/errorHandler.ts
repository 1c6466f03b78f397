import fs from 'node:fs';
import path from 'node:path';
import type { ErrorRequestHandler, Request, RequestHandler, Response } from 'express';
import { ZodError } from 'zod';
import { InvalidInput, isVeiltallyError, NotFound } from '../../errors.ts';
import type { Logger } from '../../log.ts';
import { CsrfRejected, PayloadTooLarge, TooManyAttempts, UnreadableForm, UnreadableRequest } from '../errors.ts';
import { lockedOut } from './limits.ts';
import { VIEWS_DIR } from '../paths.ts';

/** A friendly page per typed error when one exists (views/errors/<Code>.ejs), else the general one. */
function viewFor(code: string): string {
  const specific = path.join(VIEWS_DIR, 'errors', `${code}.ejs`);
  return fs.existsSync(specific) ? `errors/${code}` : 'errors/problem';
}

/** A route's way to turn a failure into a page that keeps the user's work (see routes/vote/resume.ts). */
export type Recovery = (err: unknown, req: Request) => { status: number; view: string; locals: Record<string, unknown> } | null;

export const notFoundHandler: RequestHandler = (_req, _res, next) => next(new NotFound());

/** The one error handler. Messages shown are the typed errors' own, written to be safe to show. */
/**
 * Renders an error page; if that page itself fails to render, answers with a plain line,
 * so no template error (with its stack and source lines) ever reaches the browser.
 */
function renderSafely(res: Response, logger: Logger, view: string, locals: Record<string, unknown>): void {
  res.render(view, locals, (renderError: Error | null, html?: string) => {
    if (renderError) {
      logger.error({ err: { name: renderError.name, message: renderError.message }, view }, 'error page failed to render');
      if (!res.headersSent) res.status(500).type('text/plain').send('Something went wrong on our side. Please try again in a moment.');
      return;
    }
    res.send(html);
  });
}

export function errorHandler(logger: Logger, recoveries: readonly Recovery[] = []): ErrorRequestHandler {
  return async (err, req, res, _next) => {
    if (res.headersSent) return void res.end();
    let error = err;
    const e = err as { code?: string; type?: string; status?: number; expose?: boolean };
    if (e?.code === 'EBADCSRFTOKEN') error = new CsrfRejected();
    // The router's decoding of a path parameter (bad percent-encoding such as %E0%A4%A).
    else if (err instanceof URIError) error = new UnreadableRequest('address');
    // A route's zod schema refusing a request's fields (a repeated or missing field): the client's input, not our fault.
    else if (err instanceof ZodError) error = new InvalidInput('Some of what was sent could not be read. Go back, reload the page and try again.');
    else if (e?.type === 'entity.too.large' || e?.type === 'parameters.too.many') error = new PayloadTooLarge();
    // body-parser's other client errors (unsupported charset 415, unreadable body 400) carry their own status.
    else if (typeof e?.type === 'string' && e.expose === true && typeof e.status === 'number' && e.status >= 400 && e.status < 500)
      error = new UnreadableForm(e.status);

    // A client past a failures-only limit (ballot codes): a correct attempt went through, a failed one waits.
    const clientFailure = isVeiltallyError(error) && error.status >= 400 && error.status < 500 && !(error instanceof TooManyAttempts);
    // A failed read of the limit is no reason to hide the failure's own page.
    const locked = clientFailure ? await lockedOut(res).catch(() => null) : null;
    if (locked) {
      res.set('Retry-After', String(Math.max(1, Math.ceil(locked.retryAfterMs / 1000))));
      error = new TooManyAttempts(locked.what, locked.retryAfterMs);
    }

    for (const recover of recoveries) {
      const page = recover(error, req);
      if (page) {
        res.status(page.status).set('Cache-Control', 'no-store');
        return renderSafely(res, logger, page.view, page.locals);
      }
    }

    if (!isVeiltallyError(error)) {
      // Only the error's class and the route are logged: never the body, query or headers.
      logger.error(
        {
          err: { name: (err as Error)?.name, message: (err as Error)?.message, stack: (err as Error)?.stack },
          method: req.method,
          route: req.route?.path ?? req.path,
        },
        'unexpected error',
      );
      res.status(500);
      return renderSafely(res, logger, 'errors/problem', {
        title: 'Something went wrong on our side',
        message: 'The request could not be completed. Nothing you entered has been shown to anyone. Please try again in a moment.',
        status: 500,
      });
    }
    // Logged as errorCode: the logger redacts any field named "code", since ballot codes go by that name.
    if (error.status >= 500) logger.error({ errorCode: error.code, route: req.route?.path ?? req.path }, 'server failure');
    res.status(error.status);
    res.set('Cache-Control', 'no-store');
    renderSafely(res, logger, viewFor(error.code), {
      title: titleFor(error.status),
      message: error.message,
      status: error.status,
      error: { code: error.code, ...('details' in error ? { details: (error as { details: unknown }).details } : {}) },
    });
  };
}

function titleFor(status: number): string {
  if (status === 404) return 'Not found';
  if (status === 403) return 'Not allowed';
  if (status === 409) return 'That cannot be done now';
  if (status === 410) return 'No longer valid';
  if (status === 413) return 'Too large';
  if (status === 429) return 'Please wait a moment';
  if (status >= 500) return 'Something went wrong on our side';
  return 'Please check what you entered';
}
