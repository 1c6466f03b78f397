/**
 * What a tally's timing tells the public: while the compiled server tallies an election with few
 * ballots and one with many, both with the same number of codes issued, two outside clients poll
 * `/healthz` and a ballot page. Their latencies are compared with the same server idle (p99 within
 * 2× of idle) and with each other (a two-sample Kolmogorov–Smirnov test, p ≥ 0.01: the two tallies
 * are not told apart), on PostgreSQL and on the embedded database. Also reported: the server's CPU
 * seconds over each tally's window (the work should not grow with turnout), and, as a control for
 * the machine's own noise, the same test between two idle windows.
 * The window runs from the tally's POST until the server's CPU has gone quiet (at least 2 s); a first,
 * unmeasured tally starts the workers, since the first tally of a process costs more whatever its turnout.
 * Invented data: a rowing club choosing among four names for its new boat.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { openDatabase } from '../../src/db/knex.ts';
import { migrateLatest } from '../../src/db/migrate.ts';
import { castAll, createOrganiser, openElectionFixture, FIXTURE_PASSPHRASE, FIXTURE_PASSWORD, type ElectionFixture } from '../helpers/fixtures.ts';
import { contextFor, keyDirOf, pgliteTarget, sharedSecrets, type Target } from '../reliability/_harness.ts';
import { figure, percentile, type BenchOptions, type Figure } from './support/figures.ts';
import { ksTwoSample } from './support/ks.ts';
import { postgresAnswers, scratchDatabase } from './support/postgres.ts';
import { startCompiledServer } from './support/server.ts';

const EMAIL = 'organiser@rowing.example';
const ORGANISER_ADDRESS = '198.18.0.1';
/**
 * Each poll comes from another address of its poller's /24, as many members each reading a page would:
 * one address polling every 20 ms while others are served is paced by the server's fair share
 * (src/web/middleware/fairShare.ts), which would measure that pacing instead of the tally.
 */
const POLLERS = { healthz: '198.18.2', ballot: '198.18.3' } as const;
let polls = 0;
const GAP_MS = 20;

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));
const cookiesOf = (res: Response) => (res.headers.getSetCookie?.() ?? []).map((c) => c.split(';')[0]).join('; ');
const csrfOf = (html: string) => /name="_csrf" value="([^"]+)"/.exec(html)?.[1] ?? '';

/** The server's CPU time so far (all threads, the tally workers among them), in seconds. */
function cpuSeconds(pid: number): number {
  const fields = fs.readFileSync(`/proc/${pid}/stat`, 'utf8').split(') ')[1]!.split(' ');
  // After the command: state is field 3, utime field 14, stime field 15 (proc(5)); ticks of 1/100 s (common practice: USER_HZ = 100).
  return (Number(fields[11]) + Number(fields[12])) / 100;
}

async function signIn(base: string): Promise<string> {
  const headers = { 'x-forwarded-for': ORGANISER_ADDRESS };
  const page = await fetch(`${base}/organise/sign-in`, { headers });
  const cookie = cookiesOf(page);
  const res = await fetch(`${base}/organise/sign-in`, {
    method: 'POST',
    redirect: 'manual',
    headers: { ...headers, 'content-type': 'application/x-www-form-urlencoded', cookie },
    body: new URLSearchParams({ _csrf: csrfOf(await page.text()), email: EMAIL, password: FIXTURE_PASSWORD }),
  });
  await res.arrayBuffer();
  if (res.status !== 303) throw new Error(`sign-in gave ${res.status}`);
  return [cookie, cookiesOf(res)].filter(Boolean).join('; ');
}

async function startTally(base: string, cookie: string, id: string): Promise<void> {
  const headers = { 'x-forwarded-for': ORGANISER_ADDRESS, cookie };
  const page = await fetch(`${base}/organise/elections/${id}/tally`, { headers });
  const html = await page.text();
  const res = await fetch(`${base}/organise/elections/${id}/tally`, {
    method: 'POST',
    redirect: 'manual',
    headers: { ...headers, 'content-type': 'application/x-www-form-urlencoded' },
    body: new URLSearchParams({ _csrf: csrfOf(html), passphrase: FIXTURE_PASSPHRASE }),
  });
  await res.arrayBuffer();
  if (res.status !== 303) throw new Error(`the tally was refused (${res.status})`);
}

interface Latencies {
  healthz: number[];
  ballot: number[];
}

/** Two outside clients, each polling one page in turn with a short gap, until `done` resolves. */
async function poll(base: string, ballotPath: string, done: Promise<unknown>): Promise<Latencies> {
  let stop = false;
  void done.then(() => (stop = true));
  const one = async (path: string, address: string, into: number[]) => {
    while (!stop) {
      const t = performance.now();
      const res = await fetch(`${base}${path}`, { headers: { 'x-forwarded-for': `${address}.${1 + (polls++ % 250)}` } });
      await res.arrayBuffer();
      if (res.status !== 200) throw new Error(`${path} answered ${res.status}`);
      into.push(performance.now() - t);
      await sleep(GAP_MS);
    }
  };
  const out: Latencies = { healthz: [], ballot: [] };
  await Promise.all([one('/healthz', POLLERS.healthz, out.healthz), one(ballotPath, POLLERS.ballot, out.ballot)]);
  return out;
}

/** Resolves once the server's CPU has stayed under a quarter of a core for two 200 ms samples, after at least 2 s. */
async function quiet(pid: number): Promise<{ seconds: number; cpu: number }> {
  const t0 = performance.now();
  const c0 = cpuSeconds(pid);
  let last = c0;
  let calm = 0;
  for (;;) {
    await sleep(200);
    const c = cpuSeconds(pid);
    calm = c - last < 0.05 ? calm + 1 : 0;
    last = c;
    const elapsed = (performance.now() - t0) / 1000;
    if ((elapsed >= 2 && calm >= 2) || elapsed > 120) return { seconds: elapsed, cpu: c - c0 };
  }
}

async function prepare(target: Target, secrets: ReturnType<typeof sharedSecrets>, codes: number, few: number) {
  const db = target.open();
  try {
    await migrateLatest(db.knex);
    const ctx = contextFor(db, secrets.pepper, secrets.seed, keyDirOf(target));
    const organiserId = await createOrganiser(ctx, EMAIL);
    const now = Date.now();
    const timing = { opensAt: new Date(now), closesAt: new Date(now + 60 * 60_000) };
    const options = ['Swift Heron', 'Morning Mist', 'Second Wind', 'Old Faithful'].map((label) => ({ label, description: '' }));
    const make = () => openElectionFixture(ctx, organiserId, { ...timing, options, codes });
    const small: ElectionFixture = await make();
    const large: ElectionFixture = await make();
    const warmUp: ElectionFixture = await openElectionFixture(ctx, organiserId, { ...timing, options, codes: few });
    const landing: ElectionFixture = await openElectionFixture(ctx, organiserId, { ...timing, options, codes: 1 });
    const ballots = (n: number) => Array.from({ length: n }, (_x, i) => [i % 4, (i * 3 + 1) % 4].filter((p, j, a) => a.indexOf(p) === j));
    await castAll(ctx, warmUp, ballots(few));
    await castAll(ctx, small, ballots(few));
    await castAll(ctx, large, ballots(codes));
    await db
      .knex('elections')
      .whereIn('id', [warmUp.id, small.id, large.id])
      .update({ closes_at: new Date(Date.now() - 1000) });
    return { warmUp, small, large, landing };
  } finally {
    await db.close();
  }
}

async function measure(
  engine: 'PostgreSQL' | 'embedded',
  target: Target,
  secrets: ReturnType<typeof sharedSecrets>,
  opts: BenchOptions,
): Promise<Figure[]> {
  const codes = opts.quick ? 1000 : 5000;
  const few = 50;
  const { warmUp, small, large, landing } = await prepare(target, secrets, codes, few);
  const server = await startCompiledServer({ ...target.env, VEILTALLY_DATA_DIR: target.dataDir, LOG_LEVEL: 'warn', TRUST_PROXY: 'loopback' });
  const pid = server.child.pid!;
  const ballotPath = `/vote/${landing.id}`;
  try {
    const cookie = await signIn(server.url);
    // Not measured: a first tally in the process (it starts the tally's workers) and the pages' first requests.
    await startTally(server.url, cookie, warmUp.id);
    await poll(server.url, ballotPath, quiet(pid));
    const idleMs = opts.quick ? 2500 : 5000;
    const idleA = await poll(server.url, ballotPath, sleep(idleMs));
    const idleB = await poll(server.url, ballotPath, sleep(idleMs));
    const idle: Latencies = { healthz: [...idleA.healthz, ...idleB.healthz], ballot: [...idleA.ballot, ...idleB.ballot] };
    const during: Record<'small' | 'large', Latencies & { cpu: number; seconds: number }> = {} as never;
    for (const [name, f] of [
      ['small', small],
      ['large', large],
    ] as const) {
      await startTally(server.url, cookie, f.id);
      const window = quiet(pid);
      const lat = await poll(server.url, ballotPath, window);
      during[name] = { ...lat, ...(await window) };
    }
    const fmt = (n: number) => n.toLocaleString('en');
    const label = `tally timing, ${engine}, ${fmt(codes)} codes`;
    const figures: Figure[] = [];
    for (const page of ['healthz', 'ballot'] as const) {
      const pageName = page === 'healthz' ? '/healthz' : 'ballot page';
      const idleP99 = percentile(
        [...idle[page]].sort((a, b) => a - b),
        99,
      );
      for (const [name, n] of [
        ['small', few],
        ['large', codes],
      ] as const) {
        const p99 = percentile(
          [...during[name][page]].sort((a, b) => a - b),
          99,
        );
        figures.push(
          figure(`${label}: ${pageName} p99 during a tally of ${fmt(n)} ballots (ceiling: idle p99)`, p99, 'ms', idleP99, { atMostRatio: 2 }),
        );
      }
      // The control: two idle windows, which differ only by the machine's own noise.
      const control = ksTwoSample(idleA[page], idleB[page]);
      figures.push(figure(`${label}: ${pageName}, idle vs idle (control), two-sample KS p`, control.p, 'p', null));
      const ks = ksTwoSample(during.small[page], during.large[page]);
      figures.push(
        figure(
          `${label}: ${pageName}, ${fmt(few)} vs ${fmt(codes)} ballots, two-sample KS p (n = ${during.small[page].length}, ${during.large[page].length})`,
          ks.p,
          'p',
          null,
          { atLeast: 0.01 },
        ),
      );
    }
    figures.push(
      figure(`${label}: tally window, ${fmt(few)} ballots`, during.small.seconds, 's', null),
      figure(`${label}: tally window, ${fmt(codes)} ballots`, during.large.seconds, 's', null),
      figure(`${label}: server CPU over the tally of ${fmt(codes)} ballots (ceiling: of ${fmt(few)})`, during.large.cpu, 's', during.small.cpu, {
        atMostRatio: 1.5,
      }),
    );
    return figures;
  } finally {
    await server.stop();
  }
}

/** A scratch PostgreSQL database shaped as the reliability suite's target. */
async function postgresScratch(env: Record<string, string>): Promise<Target> {
  const scratch = await scratchDatabase();
  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'vt-bench-'));
  return {
    engine: 'postgres',
    env: { ...env, DATABASE_URL: scratch.url, VEILTALLY_KEY_DIR: path.join(dataDir, 'election-keys') },
    dataDir,
    open: () => openDatabase({ engine: 'postgres', url: scratch.url, poolMax: 4 }),
    dispose: async () => {
      await scratch.drop();
      fs.rmSync(dataDir, { recursive: true, force: true });
    },
  };
}

export async function run(opts: BenchOptions): Promise<Figure[]> {
  const figures: Figure[] = [];
  if (await postgresAnswers()) {
    const secrets = sharedSecrets();
    const target = await postgresScratch(secrets.env);
    try {
      figures.push(...(await measure('PostgreSQL', target, secrets, opts)));
    } finally {
      await target.dispose();
    }
  } else console.log('  PostgreSQL does not answer (set BENCH_DATABASE_URL): skipping it');
  const secrets = sharedSecrets();
  const target = pgliteTarget(secrets.env);
  try {
    figures.push(...(await measure('embedded', target, secrets, opts)));
  } finally {
    await target.dispose();
  }
  return figures;
}
