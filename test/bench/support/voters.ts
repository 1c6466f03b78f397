import http from 'node:http';
import { percentile } from './figures.ts';

/**
 * A bounded HTTP client for intake benchmarks: members who each hold one ballot code walk
 * the real pages (start → confirm) beforehand, untimed; then `concurrency` of them at a time
 * send the final cast, exactly the form the confirm page gave them (whatever hidden fields
 * it carries), and only that POST is timed. Written here rather than with autocannon because
 * every request needs its own member's cookies and form fields.
 */
export interface PreparedCast {
  path: string;
  body: string;
  cookie: string;
}

interface Reply {
  status: number;
  location: string;
  body: string;
  cookies: string[];
}

function request(agent: http.Agent, base: URL, method: string, path: string, cookie: string, body?: string): Promise<Reply> {
  return new Promise((resolve, reject) => {
    const headers: http.OutgoingHttpHeaders = { cookie, origin: base.origin };
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

function decode(s: string): string {
  return s
    .replace(/&#(\d+);/g, (_, n: string) => String.fromCharCode(Number(n)))
    .replace(/&quot;/g, '"')
    .replace(/&lt;/g, '<')
    .replace(/&gt;/g, '>')
    .replace(/&#39;/g, "'")
    .replace(/&amp;/g, '&');
}

function attr(tag: string, name: string): string | undefined {
  const m = new RegExp(`\\s${name}="([^"]*)"`).exec(tag);
  return m ? decode(m[1]!) : undefined;
}

/** The hidden fields of the first form whose action ends with `suffix`. */
export function formFields(html: string, suffix: string): { action: string; fields: [string, string][] } {
  for (const m of html.matchAll(/<form\b([^>]*)>([\s\S]*?)<\/form>/g)) {
    const action = attr(m[1]!, 'action');
    if (!action || !action.endsWith(suffix)) continue;
    const fields: [string, string][] = [];
    for (const input of m[2]!.matchAll(/<input\b[^>]*>/g)) {
      if (attr(input[0], 'type') !== 'hidden') continue;
      const name = attr(input[0], 'name');
      if (name) fields.push([name, attr(input[0], 'value') ?? '']);
    }
    return { action, fields };
  }
  throw new Error(`no form posting to …${suffix} on the page`);
}

class Jar {
  private readonly values = new Map<string, string>();
  take(setCookies: string[]): void {
    for (const c of setCookies) {
      const [pair] = c.split(';');
      const eq = pair!.indexOf('=');
      this.values.set(pair!.slice(0, eq).trim(), pair!.slice(eq + 1).trim());
    }
  }
  header(): string {
    return [...this.values].map(([k, v]) => `${k}=${v}`).join('; ');
  }
}

async function pool<T>(items: readonly T[], concurrency: number, work: (item: T) => Promise<void>): Promise<void> {
  let next = 0;
  await Promise.all(
    Array.from({ length: Math.min(concurrency, items.length) }, async () => {
      while (next < items.length) await work(items[next++]!);
    }),
  );
}

/** Walks each member to the confirm page and keeps the cast form it offers. */
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
      const jar = new Jar();
      const start = await request(agent, base, 'GET', `/vote/${electionId}`, '');
      if (start.status !== 200) throw new Error(`start page answered ${start.status}`);
      jar.take(start.cookies);
      const startForm = formFields(start.body, '/ballot');
      const body = new URLSearchParams([
        ...startForm.fields,
        ['code', codes[i]!],
        ...approvalsFor(i).map((p): [string, string] => ['approve', String(p)]),
      ]);
      const confirm = await request(agent, base, 'POST', startForm.action.replace(/\/ballot$/, '/confirm'), jar.header(), body.toString());
      if (confirm.status !== 200) throw new Error(`confirm page answered ${confirm.status}`);
      jar.take(confirm.cookies);
      const cast = formFields(confirm.body, '/cast');
      prepared[i] = { path: cast.action, body: new URLSearchParams(cast.fields).toString(), cookie: jar.header() };
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
        const reply = await request(agent, base, 'POST', c.path, c.cookie, c.body);
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
