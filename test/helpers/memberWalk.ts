import { csrfFrom as csrfOf } from './csrf.ts';

/**
 * One way to walk a member through the voting pages over HTTP, shared by the integration tests,
 * the reliability harness, the killed-server test and the intake benchmark: GET the code page,
 * POST the code (303) → GET the ballot, POST the ticks (303) → GET the read-back, POST its cast
 * form (303) → GET the receipt. The code and ticks travel only as the member's own form input; the
 * step cookie carries them between steps, so every transport must keep cookies like a browser.
 * Each step checks its answer and throws with the status when it is not the expected one.
 */
export interface Answer {
  status: number;
  location: string | undefined;
  text: string;
  setCookies: string[];
}

/** A browser, reduced to GET and form POST with a cookie jar, following no redirects. */
export interface MemberHttp {
  get(path: string): Promise<Answer>;
  post(path: string, fields: ReadonlyArray<readonly [string, string]>): Promise<Answer>;
}

/**
 * Member n's client address (198.18.0.0/15, the range RFC 2544 sets aside for benchmarks), sent as
 * X-Forwarded-For to a server trusting loopback as its proxy (TRUST_PROXY=loopback): the server then
 * reads each member's pages in that member's own turn (src/web/middleware/fairShare.ts), as it would
 * for real members. Shared by the reliability harness and the benchmarks.
 */
export function memberAddress(n: number): string {
  return `198.${18 + ((n >> 16) & 1)}.${(n >> 8) & 255}.${n & 255}`;
}

export const RECEIPT = /<p class="receipt">([0-9A-Z]{5}-[0-9A-Z]{5})<\/p>/;

export { csrfOf };

/** The hidden fields of the first form posting to an address ending with `suffix`. */
export function hiddenFields(html: string, suffix: string): { action: string; fields: [string, string][] } {
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

function attr(tag: string, name: string): string | undefined {
  const m = new RegExp(`\\s${name}="([^"]*)"`).exec(tag);
  return m
    ? m[1]!
        .replace(/&#(\d+);/g, (_, n: string) => String.fromCharCode(Number(n)))
        .replace(/&quot;/g, '"')
        .replace(/&lt;/g, '<')
        .replace(/&gt;/g, '>')
        .replace(/&#39;/g, "'")
        .replace(/&amp;/g, '&')
    : undefined;
}

/** A step answered other than the walk expects; `status` is what it answered. */
export class StepFailed extends Error {
  constructor(
    readonly status: number,
    message: string,
  ) {
    super(message);
  }
}

function expectAnswer(a: Answer, status: number, what: string, location?: string): Answer {
  if (a.status !== status || (location !== undefined && a.location !== location)) {
    throw new StepFailed(
      a.status,
      `${what} answered ${a.status}${a.location ? ` → ${a.location}` : ''}, expected ${status}${location ? ` → ${location}` : ''}`,
    );
  }
  return a;
}

/** GET the code page, POST the code: the 303 to the ballot (or, with ticks kept, to the read-back). */
export async function sendCode(m: MemberHttp, electionId: string, code: string): Promise<Answer> {
  const start = expectAnswer(await m.get(`/vote/${electionId}`), 200, 'code page');
  return m.post(`/vote/${electionId}/ballot`, [
    ['_csrf', csrfOf(start.text)],
    ['code', code],
  ]);
}

/** Code typed and accepted: the ballot page (200). */
export async function toBallot(m: MemberHttp, electionId: string, code: string): Promise<Answer> {
  expectAnswer(await sendCode(m, electionId, code), 303, 'code step', `/vote/${electionId}/ballot`);
  return expectAnswer(await m.get(`/vote/${electionId}/ballot`), 200, 'ballot page');
}

/** From the ballot page, send these ticks: the 303 answer. */
export async function sendTicks(m: MemberHttp, electionId: string, ballotHtml: string, approvals: readonly number[]): Promise<Answer> {
  return m.post(`/vote/${electionId}/confirm`, [['_csrf', csrfOf(ballotHtml)], ...approvals.map((a): [string, string] => ['approve', String(a)])]);
}

/** Code and ticks sent: the read-back page (200). */
export async function toConfirm(m: MemberHttp, electionId: string, code: string, approvals: readonly number[]): Promise<Answer> {
  const ballot = await toBallot(m, electionId, code);
  expectAnswer(await sendTicks(m, electionId, ballot.text, approvals), 303, 'ballot step', `/vote/${electionId}/confirm`);
  return expectAnswer(await m.get(`/vote/${electionId}/confirm`), 200, 'read-back page');
}

/** POST the read-back page's cast form as it stands: the answer (303 to the receipt when cast). */
export async function castFrom(m: MemberHttp, electionId: string, confirmHtml: string): Promise<Answer> {
  const form = hiddenFields(confirmHtml, `/vote/${electionId}/cast`);
  return m.post(form.action, form.fields);
}

/** The receipt on the receipt page, or null when the page shows none. */
export async function receiptPage(m: MemberHttp, electionId: string): Promise<{ page: Answer; receipt: string | null }> {
  const page = await m.get(`/vote/${electionId}/receipt`);
  return { page, receipt: page.status === 200 ? (RECEIPT.exec(page.text)?.[1] ?? null) : null };
}

/** The whole walk. `cast` is the cast POST's answer; the receipt is read only when it was a 303. */
export async function voteThrough(
  m: MemberHttp,
  electionId: string,
  code: string,
  approvals: readonly number[],
): Promise<{ confirm: Answer; cast: Answer; receipt: string | null }> {
  const confirm = await toConfirm(m, electionId, code, approvals);
  const cast = await castFrom(m, electionId, confirm.text);
  if (cast.status !== 303) return { confirm, cast, receipt: null };
  return { confirm, cast, receipt: (await receiptPage(m, electionId)).receipt };
}

/** Cookies as a browser keeps them, enough for these pages: by name, dropped when expired. */
export class CookieJar {
  private readonly values = new Map<string, string>();
  take(setCookies: readonly string[]): void {
    for (const c of setCookies) {
      const [pair, ...attrs] = c.split(';');
      const eq = pair!.indexOf('=');
      const name = pair!.slice(0, eq).trim();
      const gone = attrs.some((a) => /^\s*max-age=0\s*$/i.test(a) || /^\s*expires=.*1970/i.test(a));
      if (gone) this.values.delete(name);
      else this.values.set(name, pair!.slice(eq + 1).trim());
    }
  }
  header(): string {
    return [...this.values].map(([k, v]) => `${k}=${v}`).join('; ');
  }
}

/** A member over fetch against a listening server (real server processes, loopback apps). */
/**
 * `address`, when given, is sent as X-Forwarded-For: the member's own client address, for a server
 * that trusts loopback as its proxy (TRUST_PROXY=loopback), so many members are many clients.
 */
export function fetchMember(
  base: string,
  options: { signal?: AbortSignal; jar?: CookieJar; address?: string } = {},
): MemberHttp & { jar: CookieJar } {
  const jar = options.jar ?? new CookieJar();
  const from: Record<string, string> = options.address ? { 'x-forwarded-for': options.address } : {};
  const send = async (method: 'GET' | 'POST', path: string, body?: URLSearchParams): Promise<Answer> => {
    const res = await fetch(new URL(path, base), {
      method,
      redirect: 'manual',
      headers: { cookie: jar.header(), ...from, ...(body ? { 'content-type': 'application/x-www-form-urlencoded' } : {}) },
      body,
      signal: options.signal,
    });
    const text = await res.text();
    const setCookies = res.headers.getSetCookie?.() ?? [];
    jar.take(setCookies);
    return { status: res.status, location: res.headers.get('location') ?? undefined, text, setCookies };
  };
  return {
    jar,
    get: (path) => send('GET', path),
    post: (path, fields) => send('POST', path, new URLSearchParams(fields.map(([k, v]): [string, string] => [k, v]))),
  };
}
