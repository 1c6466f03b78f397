import http, { type Server } from 'node:http';
import type { Express } from 'express';
import { answerClientError } from './middleware/security.ts';

/**
 * How long a connection may take before the server closes it. Node's defaults let a request take
 * 300 s to arrive and check only every 30 s, so a thousand connections sending their bodies a byte
 * at a time held the server's sockets for minutes.
 * - headers: the whole request head must arrive within this (slow-header connections).
 * - request: the whole request, body included, must arrive within this: the body-read timeout
 *   (a 512 KiB form, the largest we take, needs 18 KB/s to make it).
 * - keepAlive: an idle kept-alive connection closes after this between requests.
 * - idle: a socket with no traffic at all closes after this, whatever it is doing.
 * - check: how often the server looks for connections past their header or request time.
 */
export interface ServerLimits {
  headersTimeoutMs: number;
  requestTimeoutMs: number;
  keepAliveTimeoutMs: number;
  idleTimeoutMs: number;
  checkIntervalMs: number;
}

export const SERVER_LIMITS: Readonly<ServerLimits> = Object.freeze({
  headersTimeoutMs: 15_000,
  requestTimeoutMs: 30_000,
  keepAliveTimeoutMs: 5_000,
  idleTimeoutMs: 60_000,
  checkIntervalMs: 1_000,
});

/** The HTTP server main.ts listens with: the app behind the limits above and the protective clientError answer. */
export function createHttpServer(app: Express, limits: ServerLimits = SERVER_LIMITS): Server {
  const server = http.createServer(
    {
      headersTimeout: limits.headersTimeoutMs,
      requestTimeout: limits.requestTimeoutMs,
      keepAliveTimeout: limits.keepAliveTimeoutMs,
      connectionsCheckingInterval: limits.checkIntervalMs,
    },
    app,
  );
  server.timeout = limits.idleTimeoutMs;
  server.on('clientError', answerClientError);
  return server;
}
