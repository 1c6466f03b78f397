import http from 'node:http';
import { percentile } from './figures.ts';
import { CookieJar, hiddenFields, memberAddress, toConfirm, type Answer, type MemberHttp } from '../../helpers/memberWalk.ts';

/**
 * A bounded HTTP client for intake benchmarks: members who each hold one ballot code walk
 * the real pages (code → ballot → read-back) beforehand, untimed; then `concurrency` of them at
 * a time send the final cast, exactly the form the read-back page gave them with the cookies their
 * browser then held (the step cookie among them), and only that POST is timed. Written here rather than with autocannon because
 * every request needs its own member's cookies and form fields.
 */
export interface PreparedCast {
  path: string;
  body: string;
  cookie: string;
  /** The member's own client address, sent as X-Forwarded-For (the server trusts loopback as its proxy). */
  address: string;
}

interface Reply {
  status: number;
  location: string;
  body: string;
  cookies: string[];
}

function request(agent: http.Agent, base: URL, method: string, path: string, cookie: string, address: string, body?: string): Promise<Reply> {
  return new Promise((resolve, reject) => {
    const headers: http.OutgoingHttpHeaders = { cookie, origin: base.origin, 'x-forwarded-for': address };
    if (body !== undefined) {
      headers['content-type'] = 'application/x-www-form-urlencoded';
      headers['content-length'] = Buffer.byteLength(body);
    }
    const req = http.request({ agent, host: base.hostname, port: base.port, method, path, headers }, (res) => {
      const chunks: Buffer[] = [];
      res.on('data', (c: Buffer) => chunks.push(c));
      res.on('end', () =>
        resolve({
          status: res.statusCode ?? 0,
          location: res.headers.location ?? '',
          body: Buffer.concat(chunks).toString('utf8'),
          cookies: [res.headers['set-cookie'] ?? []].flat(),
        }),
      );
      res.on('error', reject);
    });
    req.on('error', reject);
    req.end(body);
  });
}

/** The hidden fields of the first form posting to an address ending with `suffix` (the walk's own parser). */
export const formFields = hiddenFields;

/** The bench's own HTTP client as the member walk's browser: bounded keep-alive sockets, a cookie jar. */
function browser(agent: http.Agent, base: URL, jar: CookieJar, address: string): MemberHttp {
  const answer = (r: Reply): Answer => {
    jar.take(r.cookies);
    return { status: r.status, location: r.location || undefined, text: r.body, setCookies: r.cookies };
  };
  return {
    get: async (path) => answer(await request(agent, base, 'GET', path, jar.header(), address)),
    post: async (path, fields) =>
      answer(
        await request(
          agent,
          base,
          'POST',
          path,
          jar.header(),
          address,
          new URLSearchParams(fields.map(([k, v]): [string, string] => [k, v])).toString(),
        ),
      ),
  };
}

async function pool<T>(items: readonly T[], concurrency: number, work: (item: T) => Promise<void>): Promise<void> {
  let next = 0;
  await Promise.all(
    Array.from({ length: Math.min(concurrency, items.length) }, async () => {
      while (next < items.length) await work(items[next++]!);
    }),
  );
}

/**
 * Walks each member through the real steps to the read-back page (test/helpers/memberWalk.ts) and
 * keeps the cast form it offers with the browser's cookies at that moment: the step cookie, which
 * carries the code, the ticks and the cast token, goes with the cast as a browser would send it.
 */
export async function prepareCasts(
  baseUrl: string,
  electionId: string,
  codes: readonly string[],
  approvalsFor: (i: number) => number[],
): Promise<PreparedCast[]> {
  const base = new URL(baseUrl);
  const agent = new http.Agent({ keepAlive: true, maxSockets: 8 });
  const prepared: PreparedCast[] = new Array(codes.length);
  try {
    await pool([...codes.keys()], 8, async (i) => {
      const jar = new CookieJar();
      const address = memberAddress(i);
      const confirm = await toConfirm(browser(agent, base, jar, address), electionId, codes[i]!, approvalsFor(i));
      const cast = hiddenFields(confirm.text, '/cast');
      prepared[i] = { path: cast.action, body: new URLSearchParams(cast.fields).toString(), cookie: jar.header(), address };
    });
  } finally {
    agent.destroy();
  }
  return prepared;
}

export interface IntakeResult {
  ballotsPerSecond: number;
  p50Ms: number;
  p99Ms: number;
  errors: number;
  casts: number;
}

/**
 * Sends every prepared cast, `concurrency` at a time. A cast counts when the server stored it: it
 * answers with the receipt page (200) or, post/redirect/get, a 303 to it (the GET is not timed).
 */
export async function castAll(baseUrl: string, casts: readonly PreparedCast[], concurrency: number): Promise<IntakeResult> {
  const base = new URL(baseUrl);
  const agent = new http.Agent({ keepAlive: true, maxSockets: concurrency });
  const latencies: number[] = [];
  let errors = 0;
  const t0 = performance.now();
  try {
    await pool(casts, concurrency, async (c) => {
      const t = performance.now();
      try {
        const reply = await request(agent, base, 'POST', c.path, c.cookie, c.address, c.body);
        if (!(reply.status === 200 || (reply.status === 303 && /\/receipt\b/.test(reply.location)))) errors++;
      } catch {
        errors++;
      }
      latencies.push(performance.now() - t);
    });
  } finally {
    agent.destroy();
  }
  const seconds = (performance.now() - t0) / 1000;
  latencies.sort((a, b) => a - b);
  return {
    ballotsPerSecond: (casts.length - errors) / seconds,
    p50Ms: percentile(latencies, 50),
    p99Ms: percentile(latencies, 99),
    errors,
    casts: casts.length,
  };
}
