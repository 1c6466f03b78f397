import type { RequestHandler } from 'express';
import type { Logger } from '../../log.ts';

/**
 * Logs method, route path and status. Never the query string, body, cookies or headers, so no
 * code, receipt, passphrase or session id can reach a log; and never how long a request took,
 * since the time of a tally's request (or of a cast) can reveal turnout or who voted.
 */
export function requestLog(logger: Logger): RequestHandler {
  return (req, res, next) => {
    res.on('finish', () => {
      logger.debug({ method: req.method, path: req.path, status: res.statusCode }, 'request');
    });
    next();
  };
}
