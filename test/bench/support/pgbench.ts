/**
 * The intake's ceiling: the app's own one-statement cast (oneStatementCast in src/elections/ballotRepo.ts, the text
 * castInOneStatement sends) run by pgbench, PostgreSQL's benchmark client (on Debian 12 in postgresql-15), against
 * real unspent codes of an open election, with ballots the size the app's own casts stored in the same run.
 *
 * How the text gets there: knex turns the builder's `?` placeholders into `$1…$n` for pg (toSQL().toNative(),
 * what knex itself sends); each `$k` becomes a pgbench variable. pgbench can only compute integers, so the four
 * values that differ per cast become expressions of the transaction's number n, computed by the server:
 *   code hash    sha256(int8send(n))         32 bytes, as HMAC-SHA-256 is; the codes were inserted with these hashes
 *   receipt hash sha256(int8send(n + 2^40))  32 bytes, scattered over the key's index as the app's are
 *   token hash   sha256(int8send(n + 2^41))  (when the app's casts carried a cast token, as the member walk's do)
 *   ballot id    md5(int8send(n + salt))::uuid  random-looking, as randomUuid's are; ballot ids are unique across
 *                elections, so each run adds its own random salt (2^47 to 2^48)
 * Everything else is the app's text unchanged and goes as a parameter, as pg sends it. Three sha256 and one md5 of
 * 8 bytes cost the server a few microseconds, against the milliseconds a cast takes.
 *
 * Which code each transaction spends: client c (pgbench's :client_id, 0-based) runs exactly `perClient`
 * transactions (-t) and counts them in its own variable i (pgbench keeps a client's variables from one
 * transaction to the next; -D i=0 starts every client at 0), so n = c × perClient + i + 1 runs over 1 … clients ×
 * perClient, each once, and exactly those codes are inserted beforehand: every transaction spends a distinct real
 * unspent code and does a real cast's work. pgbench counts a statement that stored nothing as a success, so the
 * stored ballots are counted afterwards and only those count as casts.
 *
 * Query mode -M extended: unnamed statements over the extended protocol, parsed and planned every time, which
 * is how pg (node-postgres) sends a query with parameters; -M prepared would save the parse and plan the app
 * pays for and raise the ceiling above anything the app could reach.
 */
import { spawn, spawnSync } from 'node:child_process';
import crypto from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { Database } from '../../../src/db/knex.ts';
import { oneStatementCast } from '../../../src/elections/ballotRepo.ts';
import { percentile } from './figures.ts';

const PGBENCH = 'pgbench';

/** pgbench's version line, or null when there is no pgbench on the PATH. */
export function pgbenchVersion(): string | null {
  const r = spawnSync(PGBENCH, ['--version'], { encoding: 'utf8' });
  return r.status === 0 ? r.stdout.trim() : null;
}

/**
 * How many more connections the server will take with room to spare: pgbench opens one per client, and others
 * share this server. max_connections less the reserved slots, those open now and a margin of 20.
 */
export async function spareConnections(db: Database): Promise<number> {
  const r = await db.knex.raw(
    `select current_setting('max_connections')::int - current_setting('superuser_reserved_connections')::int
       - (select count(*) from pg_stat_activity)::int as spare`,
  );
  return Number((r as { rows: Array<{ spare: number }> }).rows[0]!.spare) - 20;
}

export interface PgbenchCasts {
  clients: number;
  transactions: number;
  /** Ballots the statement stored, counted in the database afterwards. */
  stored: number;
  /** pgbench's tps × stored/transactions: only stored ballots count. */
  castsPerSecond: number;
  latencyAverageMs: number;
  p50Ms: number;
  p99Ms: number;
}

interface Lengths {
  sealed: number;
  /** null: the app's casts carried no cast token, so neither does the statement. */
  sealedReceipt: number | null;
}

/** The byte lengths of what the app stored for an election's casts (every sealed ballot is padded alike). */
export async function storedLengths(db: Database, electionId: string): Promise<Lengths> {
  const b = await db.knex('ballots').where({ election_id: electionId }).first(db.knex.raw('octet_length(sealed) as n'));
  if (!b) throw new Error('the HTTP casts stored no ballot to take the size from');
  const t = await db.knex('cast_tokens').where({ election_id: electionId }).first(db.knex.raw('octet_length(sealed_receipt) as n'));
  return { sealed: Number(b.n), sealedReceipt: t ? Number(t.n) : null };
}

const hex = (b: Buffer) => `\\x${b.toString('hex')}`;

/** The pgbench script: the cast statement with pgbench variables for its parameters (see the module comment). */
function castScript(electionId: string, publicKey: Buffer, optionCount: number, lengths: Lengths) {
  // Stand-ins, told apart by value, show which `$k` is which whatever order the builder binds them in.
  const perCast = {
    codeHash: crypto.randomBytes(32),
    receiptHash: crypto.randomBytes(32),
    tokenHash: crypto.randomBytes(32),
    ballotId: crypto.randomUUID(),
  };
  const now = new Date();
  const sealed = crypto.randomBytes(lengths.sealed);
  const sealedReceipt = lengths.sealedReceipt === null ? null : crypto.randomBytes(lengths.sealedReceipt);
  const { sql, bindings } = oneStatementCast({
    electionId,
    publicKey,
    optionCount,
    now,
    codeHash: perCast.codeHash,
    receiptHash: perCast.receiptHash,
    ballotId: perCast.ballotId,
    sealed,
    castToken: sealedReceipt ? { hash: perCast.tokenHash, sealedReceipt } : null,
  });
  return { sql, bindings, perCast, now, sealed, sealedReceipt };
}

export async function pgbenchCasts(
  db: Database,
  url: string,
  election: { id: string; publicKey: Buffer; optionCount: number },
  lengths: Lengths,
  clients: number,
  transactions: number,
): Promise<PgbenchCasts> {
  const perClient = Math.ceil(transactions / clients);
  const total = perClient * clients;
  await db.knex.raw('insert into ballot_codes (election_id, code_hash) select ?, sha256(int8send(g)) from generate_series(1, ?::int8) g', [
    election.id,
    total,
  ]);

  const s = castScript(election.id, election.publicKey, election.optionCount, lengths);
  const native = db.knex.raw(s.sql, s.bindings).toSQL().toNative();
  const same = (v: unknown, w: unknown) => v === w || (Buffer.isBuffer(v) && Buffer.isBuffer(w) && v.equals(w));
  const variables: Record<string, string> = {
    election_id: election.id,
    now: s.now.toISOString(),
    public_key: hex(election.publicKey),
    option_count: String(election.optionCount),
    sealed: hex(s.sealed),
    ...(s.sealedReceipt ? { sealed_receipt: hex(s.sealedReceipt) } : {}),
  };
  const asVariable = (v: unknown): string => {
    if (same(v, s.perCast.codeHash)) return 'sha256(int8send(:n::int8))';
    if (same(v, s.perCast.receiptHash)) return 'sha256(int8send(:receipt::int8))';
    if (same(v, s.perCast.tokenHash)) return 'sha256(int8send(:token::int8))';
    if (same(v, s.perCast.ballotId)) return 'md5(int8send(:ballot::int8))::uuid';
    if (v instanceof Date && v.getTime() === s.now.getTime()) return ':now';
    if (v === election.id) return ':election_id';
    if (v === election.optionCount) return ':option_count';
    if (same(v, election.publicKey)) return ':public_key';
    if (same(v, s.sealed)) return ':sealed';
    if (s.sealedReceipt && same(v, s.sealedReceipt)) return ':sealed_receipt';
    throw new Error('the one-statement cast binds a value the pgbench script does not know: update test/bench/support/pgbench.ts');
  };
  const statement = native.sql.replace(/\$(\d+)\b/g, (_, k: string) => asVariable(native.bindings[Number(k) - 1]));

  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'vt-pgbench-'));
  try {
    const script = path.join(dir, 'cast.sql');
    fs.writeFileSync(
      script,
      [
        `\\set n :client_id * ${perClient} + :i + 1`,
        '\\set i :i + 1',
        `\\set receipt :n + ${2 ** 40}`,
        `\\set token :n + ${2 ** 41}`,
        `\\set ballot :n + ${crypto.randomInt(2 ** 47) + 2 ** 47}`,
        `${statement.trim()};`,
        '',
      ].join('\n'),
    );
    const args = ['-n', '-M', 'extended', '-c', String(clients), '-j', String(Math.min(2, clients)), '-t', String(perClient), '-D', 'i=0'];
    for (const [k, v] of Object.entries(variables)) args.push('-D', `${k}=${v}`);
    args.push('-f', script, '-l', `--log-prefix=${path.join(dir, 'tx')}`, url);
    const out = await runPgbench(args);

    const number = (re: RegExp) => {
      const m = re.exec(out);
      if (!m) throw new Error(`pgbench printed no ${re.source}`);
      return Number(m[1]);
    };
    const tps = number(/^tps = ([\d.]+)/m);
    const processed = number(/^number of transactions actually processed: (\d+)/m);
    const latencyAverageMs = number(/^latency average = ([\d.]+) ms/m);
    // Per-transaction log (pgbench -l): client, transaction, latency in µs, script, epoch s, µs; "failed" for a failure.
    const latencies = fs
      .readdirSync(dir)
      .filter((f) => f.startsWith('tx.'))
      .flatMap((f) => fs.readFileSync(path.join(dir, f), 'utf8').split('\n'))
      .map((line) => Number(line.split(' ')[2]) / 1000)
      .filter((ms) => Number.isFinite(ms))
      .sort((a, b) => a - b);
    const row = await db.knex('ballots').where({ election_id: election.id }).count({ n: '*' }).first();
    const stored = Number(row?.n ?? 0);
    return {
      clients,
      transactions: total,
      stored,
      castsPerSecond: processed === 0 ? 0 : (tps * stored) / processed,
      latencyAverageMs,
      p50Ms: percentile(latencies, 50),
      p99Ms: percentile(latencies, 99),
    };
  } finally {
    fs.rmSync(dir, { recursive: true, force: true });
  }
}

function runPgbench(args: string[]): Promise<string> {
  return new Promise((resolve, reject) => {
    const child = spawn(PGBENCH, args, { stdio: ['ignore', 'pipe', 'pipe'] });
    let out = '';
    let err = '';
    child.stdout.on('data', (c: Buffer) => (out += c.toString('utf8')));
    child.stderr.on('data', (c: Buffer) => (err += c.toString('utf8')));
    child.on('error', reject);
    child.on('close', (code) => {
      // Its summary goes to stdout, progress and errors to stderr: only the last lines of stderr, which hold no secret
      // (the statement's values are a scratch election's and invented).
      if (code === 0) resolve(out);
      else reject(new Error(`pgbench exited with ${code}: ${err.trim().split('\n').slice(-5).join(' | ')}`));
    });
  });
}
