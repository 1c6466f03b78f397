import type { RequestHandler } from 'express';
import type { Logger } from '../../log.ts';

/**
 * Logs method, route path, status and time. Never the query string, body, cookies or headers,
 * so no code, receipt, passphrase or session id can reach a log.
 */
export function requestLog(logger: Logger): RequestHandler {
  return (req, res, next) => {
    const started = process.hrtime.bigint();
    res.on('finish', () => {
      const ms = Number(process.hrtime.bigint() - started) / 1e6;
      logger.debug({ method: req.method, path: req.path, status: res.statusCode, ms: Math.round(ms) }, 'request');
    });
    next();
  };
}
