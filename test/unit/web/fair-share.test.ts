import http from 'node:http';
import type { AddressInfo } from 'node:net';
import express, { type ErrorRequestHandler } from 'express';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { TooManyAttempts } from '../../../src/web/errors.ts';
import { FAIR_SHARE_WAITING, clientKey, fairShare, type FairShare } from '../../../src/web/middleware/fairShare.ts';

/**
 * The fair share over real sockets: a small app behind it whose route `/hold/:n` waits until the
 * test lets it go, so which requests are in flight and which wait is decided by the test, not by
 * timing. Clients are told apart by X-Forwarded-For from the loopback proxy (trust proxy).
 */
describe('fair share: one request in flight per client, the rest in turn', () => {
  let server: http.Server;
  let base: string;
  let share: FairShare;
  let entered: string[];
  let gates: Map<string, () => void>;

  async function listen(options: Parameters<typeof fairShare>[0] = {}) {
    share = fairShare(options);
    entered = [];
    gates = new Map();
    const app = express();
    app.set('trust proxy', 'loopback');
    app.use(share);
    app.get('/hold/:n', async (req, res) => {
      entered.push(req.params.n);
      await new Promise<void>((resolve) => gates.set(req.params.n, resolve));
      res.send(`done ${req.params.n}`);
    });
    app.get('/fail', () => {
      throw new Error('a handler that fails');
    });
    app.get('/now', (_req, res) => void res.send('now'));
    const handler: ErrorRequestHandler = (err, _req, res, _next) => {
      res.status(err instanceof TooManyAttempts ? 429 : 500).send(err instanceof TooManyAttempts ? err.message : 'failed');
    };
    app.use(handler);
    server = http.createServer(app);
    await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
    base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  }

  beforeEach(() => listen());
  afterEach(async () => {
    for (const open of gates.values()) open();
    server.closeAllConnections();
    await new Promise((resolve) => server.close(resolve));
  });

  const get = (path: string, from: string, signal?: AbortSignal) =>
    fetch(base + path, { headers: { 'x-forwarded-for': from }, signal }).then(async (r) => ({
      status: r.status,
      retryAfter: r.headers.get('retry-after'),
      text: await r.text(),
    }));

  /** Waits (bounded) until `check` holds: the server's state, not a clock, decides. */
  async function until(check: () => boolean, what: string) {
    for (let i = 0; i < 2000 && !check(); i++) await new Promise((r) => setTimeout(r, 5));
    if (!check()) throw new Error(`never: ${what}`);
  }
  const waiting = (key: string) => share.clients().get(key)?.waiting ?? 0;
  const release = async (n: string) => {
    await until(() => gates.has(n), `request ${n} in flight`);
    gates.get(n)!();
  };

  it('answers one client’s requests one at a time, in the order they came', async () => {
    const first = get('/hold/1', '198.18.0.1');
    await until(() => entered.length === 1, 'the first request in flight');
    const rest = ['2', '3', '4'].map((n, i) =>
      until(() => waiting('198.18.0.1') === i, 'the one before queued').then(() => get(`/hold/${n}`, '198.18.0.1')),
    );
    await until(() => waiting('198.18.0.1') === 3, 'three waiting');
    expect(share.clients().get('198.18.0.1')).toEqual({ inFlight: 1, waiting: 3, pacing: false });
    expect(entered).toEqual(['1']);
    for (const n of ['1', '2', '3', '4']) {
      await release(n);
      // Only the next in line has started.
      await until(() => entered.length === Math.min(4, Number(n) + 1), `request ${Number(n) + 1} started`);
      expect(entered).toEqual(['1', '2', '3', '4'].slice(0, Math.min(4, Number(n) + 1)));
    }
    expect((await Promise.all([first, ...rest])).map((r) => r.text)).toEqual(['done 1', 'done 2', 'done 3', 'done 4']);
    expect(share.clients().size).toBe(0);
  });

  it(`refuses the next request with 429 and Retry-After: 5 once ${FAIR_SHARE_WAITING} are waiting; another client is answered at once`, async () => {
    const held = get('/hold/0', '198.18.0.2');
    await until(() => entered.length === 1, 'one in flight');
    const queued = Array.from({ length: FAIR_SHARE_WAITING }, (_x, i) => get(`/hold/q${i}`, '198.18.0.2'));
    await until(() => waiting('198.18.0.2') === FAIR_SHARE_WAITING, `${FAIR_SHARE_WAITING} waiting`);
    const refused = await get('/now', '198.18.0.2');
    expect(refused.status).toBe(429);
    expect(refused.retryAfter).toBe('5');
    expect(refused.text).toMatch(/^Too many requests from your address/);
    expect(waiting('198.18.0.2')).toBe(FAIR_SHARE_WAITING); // the refused one took no place
    expect(await get('/now', '198.18.0.3')).toMatchObject({ status: 200, text: 'now' });
    await release('0');
    for (let i = 0; i < FAIR_SHARE_WAITING; i++) await release(`q${i}`);
    expect((await Promise.all([held, ...queued])).every((r) => r.status === 200)).toBe(true);
    expect(share.clients().size).toBe(0);
  });

  it('groups IPv6 clients by /56 and reads IPv4-mapped addresses as IPv4', async () => {
    // Outside reference: RFC 4291 §2.2 text forms; a /56 keeps the first 56 bits (RFC 6177's end-site size).
    const key = (ip: string) => clientKey({ ip, socket: {} as never });
    expect(key('2001:db8:0:100::1')).toBe(key('2001:db8:0:1ff:ffff:ffff:ffff:ffff'));
    expect(key('2001:db8:0:100::1')).not.toBe(key('2001:db8:0:200::1'));
    expect(key('2001:db8:0:100::1')).toBe('2001:db8:0:100::/56');
    expect(key('::ffff:198.18.0.7')).toBe('198.18.0.7');
    expect(key('198.18.0.7')).toBe('198.18.0.7');
    // Over HTTP: the same /56 waits its turn, the next /56 does not.
    const held = get('/hold/a', '2001:db8:0:100::1');
    await until(() => entered.length === 1, 'one in flight');
    const same = get('/hold/b', '2001:db8:0:1ab::2');
    await until(() => waiting('2001:db8:0:100::/56') === 1, 'the same /56 waiting');
    expect(await get('/now', '2001:db8:0:200::1')).toMatchObject({ status: 200 });
    expect(entered).toEqual(['a']);
    await release('a');
    await release('b');
    expect((await Promise.all([held, same])).map((r) => r.text)).toEqual(['done a', 'done b']);
  });

  it('drops a waiting request whose client went away, and never runs it', async () => {
    const held = get('/hold/1', '198.18.0.4');
    await until(() => entered.length === 1, 'one in flight');
    const gone = new AbortController();
    const second = get('/hold/2', '198.18.0.4');
    await until(() => waiting('198.18.0.4') === 1, 'one waiting');
    const abandoned = get('/hold/3', '198.18.0.4', gone.signal).catch((e: Error) => e.name);
    await until(() => waiting('198.18.0.4') === 2, 'two waiting');
    const fourth = get('/hold/4', '198.18.0.4');
    await until(() => waiting('198.18.0.4') === 3, 'three waiting');
    gone.abort();
    expect(await abandoned).toBe('AbortError');
    await until(() => waiting('198.18.0.4') === 2, 'the abandoned one gone from the queue');
    await release('1');
    await release('2');
    await release('4');
    expect((await Promise.all([held, second, fourth])).map((r) => r.text)).toEqual(['done 1', 'done 2', 'done 4']);
    expect(entered).toEqual(['1', '2', '4']);
    expect(share.clients().size).toBe(0);
  });

  it('gives the turn on when a request fails or its connection closes: no slot is kept', async () => {
    const failing = get('/fail', '198.18.0.5');
    const after = get('/now', '198.18.0.5');
    expect((await failing).status).toBe(500);
    expect((await after).status).toBe(200);
    // An in-flight request whose client hangs up: its turn passes to the one waiting.
    const gone = new AbortController();
    const abandoned = get('/hold/x', '198.18.0.5', gone.signal).catch((e: Error) => e.name);
    await until(() => entered.includes('x'), 'in flight');
    const next = get('/now', '198.18.0.5');
    await until(() => waiting('198.18.0.5') === 1, 'one waiting');
    gone.abort();
    expect(await abandoned).toBe('AbortError');
    expect(await next).toMatchObject({ status: 200, text: 'now' });
    // Many failures and hang-ups later, nothing is left behind.
    await Promise.all(Array.from({ length: 30 }, () => get('/fail', '198.18.0.5')));
    gates.get('x')!();
    await until(() => share.clients().size === 0, 'no client left');
  });

  it('alone, a client is read at full speed, however much it has used', async () => {
    server.closeAllConnections();
    await new Promise((resolve) => server.close(resolve));
    await listen({ msPerSecond: 10, minChargeMs: 10 });
    for (let i = 0; i < 5; i++) {
      expect((await get('/now', '198.18.0.9')).status).toBe(200);
      expect(share.clients().get('198.18.0.9')?.pacing ?? false).toBe(false);
    }
  });

  it('while another client is served, one past its share waits in its turn, not refused; a third client is not slowed', async () => {
    server.closeAllConnections();
    await new Promise((resolve) => server.close(resolve));
    await listen({ msPerSecond: 10, minChargeMs: 10 });
    const other = get('/hold/b', '198.18.0.10'); // another client, in flight
    await until(() => entered.includes('b'), 'the other client in flight');
    expect((await get('/now', '198.18.0.6')).status).toBe(200); // charged 10 ms: its share for this second
    const paced = get('/now', '198.18.0.6');
    const after = get('/now', '198.18.0.6');
    await until(() => share.clients().get('198.18.0.6')?.pacing === true, 'the next request waiting for its share');
    expect(share.clients().get('198.18.0.6')).toEqual({ inFlight: 1, waiting: 1, pacing: true });
    expect(await get('/now', '198.18.0.7')).toMatchObject({ status: 200, text: 'now' });
    expect((await Promise.all([paced, after])).map((r) => r.status)).toEqual([200, 200]);
    await release('b');
    expect((await other).text).toBe('done b');
    await until(() => share.clients().size === 0, 'no client left');
  });

  it('a paced request whose client goes away is never run, and passes the turn on', async () => {
    server.closeAllConnections();
    await new Promise((resolve) => server.close(resolve));
    await listen({ msPerSecond: 10, minChargeMs: 10 });
    const other = get('/hold/o', '198.18.0.13');
    await until(() => entered.includes('o'), 'the other client in flight');
    expect((await get('/now', '198.18.0.8')).status).toBe(200);
    const gone = new AbortController();
    const abandoned = get('/hold/p', '198.18.0.8', gone.signal).catch((e: Error) => e.name);
    await until(() => share.clients().get('198.18.0.8')?.pacing === true, 'paced');
    const next = get('/now', '198.18.0.8');
    await until(() => waiting('198.18.0.8') === 1, 'one waiting');
    gone.abort();
    expect(await abandoned).toBe('AbortError');
    expect(await next).toMatchObject({ status: 200, text: 'now' });
    expect(entered).not.toContain('p');
    await release('o');
    await other;
    await until(() => share.clients().size === 0, 'no client left');
  });
});
