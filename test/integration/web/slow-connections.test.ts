import net from 'node:net';
import type { AddressInfo } from 'node:net';
import type { Server } from 'node:http';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { engines, freshDatabase, type TestDatabase } from '../../helpers/databases.ts';
import { testApp } from '../../helpers/app.ts';
import { testContext } from '../../helpers/context.ts';
import { createHttpServer, SERVER_LIMITS, type ServerLimits } from '../../../src/web/server.ts';

/**
 * Connections that send their request slowly are closed by the server's own timeouts
 * (src/web/server.ts), run here with short ones. The server is the one main.ts listens with,
 * over real sockets; no test here asserts a speed, only that each connection is closed, no
 * sooner than its limit allows and before a generous deadline, and that the server still answers.
 */
const SHORT: ServerLimits = { headersTimeoutMs: 600, requestTimeoutMs: 1_200, keepAliveTimeoutMs: 500, idleTimeoutMs: 10_000, checkIntervalMs: 100 };
const CONNECTIONS = 200;
const DEADLINE_MS = 20_000;

describe.each(engines)('slow connections are closed [%s]', (engine) => {
  let db: TestDatabase;
  let server: Server;
  let port: number;
  beforeAll(async () => {
    db = await freshDatabase(engine);
    server = createHttpServer(testApp(testContext(db)), SHORT);
    await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
    port = (server.address() as AddressInfo).port;
  });
  afterAll(async () => {
    server.closeAllConnections();
    await new Promise((resolve) => server.close(resolve));
    await db.dispose();
  });

  /** Opens a connection, writes `head`, then one byte of `drip` every 100 ms; resolves when the server closes it. */
  function slowClient(head: string, drip: string): Promise<{ closedAfterMs: number; answer: string }> {
    return new Promise((resolve, reject) => {
      const started = Date.now();
      const socket = net.connect(port, '127.0.0.1');
      let answer = '';
      let i = 0;
      const timer = setInterval(() => {
        if (socket.writable) socket.write(drip[i++ % drip.length]!);
      }, 100);
      const giveUp = setTimeout(() => {
        socket.destroy();
        reject(new Error('the server left a slow connection open'));
      }, DEADLINE_MS);
      socket.on('connect', () => socket.write(head));
      socket.on('data', (d) => (answer += d.toString('latin1')));
      socket.on('error', () => undefined);
      socket.on('close', () => {
        clearInterval(timer);
        clearTimeout(giveUp);
        resolve({ closedAfterMs: Date.now() - started, answer });
      });
    });
  }

  it(`${CONNECTIONS} connections sending a form body a byte at a time are each closed by the request timeout, with 408`, async () => {
    const head = 'POST /ballot HTTP/1.1\r\nHost: 127.0.0.1\r\nContent-Type: application/x-www-form-urlencoded\r\nContent-Length: 100000\r\n\r\n';
    const results = await Promise.all(Array.from({ length: CONNECTIONS }, () => slowClient(head, 'code=ABCD')));
    for (const r of results) {
      expect(r.closedAfterMs).toBeGreaterThanOrEqual(SHORT.requestTimeoutMs - 50);
      expect(r.answer.split('\r\n')[0]).toBe('HTTP/1.1 408 Request Timeout');
    }
    // The server still answers everyone else.
    const res = await fetch(`http://127.0.0.1:${port}/healthz`);
    expect(res.status).toBe(200);
  });

  it('a connection sending its headers a byte at a time is closed by the header timeout', async () => {
    const r = await slowClient('GET /healthz HTTP/1.1\r\n', 'X-Slow: yes\r\n');
    expect(r.closedAfterMs).toBeGreaterThanOrEqual(SHORT.headersTimeoutMs - 50);
    expect(r.answer.split('\r\n')[0]).toBe('HTTP/1.1 408 Request Timeout');
  });

  it('the production limits are shorter than Node’s defaults and checked every second', () => {
    // Node's defaults (http.createServer): requestTimeout 300 s, headersTimeout 60 s, checked every 30 s.
    expect(SERVER_LIMITS.requestTimeoutMs).toBeLessThan(300_000);
    expect(SERVER_LIMITS.headersTimeoutMs).toBeLessThan(SERVER_LIMITS.requestTimeoutMs);
    expect(SERVER_LIMITS.checkIntervalMs).toBeLessThanOrEqual(1_000);
  });
});
