import crypto from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { openDatabase, type Database, toCount } from '../../src/db/knex.ts';
import { migrateLatest } from '../../src/db/migrate.ts';
import type { UseCaseContext } from '../../src/elections/context.ts';
import { TEST_KDF } from '../helpers/context.ts';
import { keyDirectory } from '../../src/keyfiles/keyDirectory.ts';
import { createOrganiser, openElectionFixture, type ElectionFixture } from '../helpers/fixtures.ts';
import { startServer, type RunningServer } from '../helpers/server.ts';
import { CookieJar, StepFailed, fetchMember, hiddenFields, memberAddress, toConfirm } from '../helpers/memberWalk.ts';

/**
 * Shared by the reliability suite: real server processes on loopback, a real database (a fresh
 * PostgreSQL database per use, or an embedded directory), and bounded load loops.
 */
export const PG_URL = process.env.TEST_DATABASE_URL;

/** The instance secrets every server of one test shares, given through the environment. */
export function sharedSecrets() {
  const pepper = crypto.randomBytes(32);
  const seed = crypto.randomBytes(32);
  const session = crypto.randomBytes(32).toString('hex');
  return {
    pepper,
    seed,
    env: { VEILTALLY_CODE_PEPPER: pepper.toString('hex'), VEILTALLY_SIGNING_SEED: seed.toString('hex'), SESSION_SECRET: session },
  };
}

/** The key directory every server of a target shares (and the in-process context too). */
export function keyDirOf(target: Target): string {
  return target.env.VEILTALLY_KEY_DIR!;
}

export interface Target {
  engine: 'postgres' | 'pglite';
  /** Env for the server processes. */
  env: Record<string, string>;
  dataDir: string;
  open(): Database;
  dispose(): Promise<void>;
}

/** A fresh PostgreSQL database (so pg_dump and several servers see only this test's data). */
export async function postgresTarget(secretsEnv: Record<string, string>): Promise<Target> {
  if (!PG_URL) throw new Error('TEST_DATABASE_URL is not set');
  const name = `vt_rel_${crypto.randomBytes(5).toString('hex')}`;
  const admin = openDatabase({ engine: 'postgres', url: PG_URL, poolMax: 1 });
  await admin.knex.raw(`CREATE DATABASE ${name}`);
  await admin.close();
  const url = new URL(PG_URL);
  url.pathname = `/${name}`;
  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'vt-rel-'));
  return {
    engine: 'postgres',
    env: { ...secretsEnv, DATABASE_URL: url.toString(), VEILTALLY_KEY_DIR: path.join(dataDir, 'election-keys') },
    dataDir,
    open: () => openDatabase({ engine: 'postgres', url: url.toString(), poolMax: 4 }),
    dispose: async () => {
      const a = openDatabase({ engine: 'postgres', url: PG_URL, poolMax: 1 });
      await a.knex.raw(`DROP DATABASE IF EXISTS ${name} WITH (FORCE)`);
      await a.close();
      fs.rmSync(dataDir, { recursive: true, force: true });
    },
  };
}

export function pgliteTarget(secretsEnv: Record<string, string>): Target {
  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'vt-rel-'));
  return {
    engine: 'pglite',
    env: { ...secretsEnv, VEILTALLY_KEY_DIR: path.join(dataDir, 'election-keys') },
    dataDir,
    open: () => openDatabase({ engine: 'pglite', dataDir }),
    dispose: async () => fs.rmSync(dataDir, { recursive: true, force: true }),
  };
}

/** `keyDir`: the target's key directory (keyDirOf), the one its servers use. */
export function contextFor(db: Database, pepper: Buffer, seed: Buffer, keyDir: string): UseCaseContext {
  return {
    knex: db.knex,
    engine: db.engine,
    now: () => new Date(),
    random: (n) => crypto.randomBytes(n),
    secrets: { codePepper: pepper, signingSeed: seed },
    kdf: TEST_KDF,
    passwordKdf: TEST_KDF,
    keyFiles: keyDirectory(keyDir),
  };
}

/** Migrates, makes an organiser and an open election with `codes` codes; closes the handle (PGlite's lock). */
export async function prepareElection(target: Target, pepper: Buffer, seed: Buffer, codes: number): Promise<ElectionFixture> {
  const db = target.open();
  try {
    await migrateLatest(db.knex);
    const ctx = contextFor(db, pepper, seed, keyDirOf(target));
    const existing = await db.knex('organisers').first('id');
    const organiserId = existing?.id ?? (await createOrganiser(ctx));
    return await openElectionFixture(ctx, organiserId, { codes });
  } finally {
    await db.close();
  }
}

export async function launch(target: Target, extra: Record<string, string> = {}): Promise<RunningServer> {
  return startServer({ LOG_LEVEL: 'warn', ...target.env, ...extra }, target.dataDir);
}

export { memberAddress };

/** A member's browser, reduced to its form-token cookie and form token; each cast walks the steps from there. */
export interface Member {
  cookie: string;
  csrf: string;
  /** The member's client address (X-Forwarded-For), when the server trusts loopback as its proxy. */
  address?: string;
}

export async function memberSession(base: string, electionId: string, address?: string): Promise<Member> {
  const res = await fetch(`${base}/vote/${electionId}`, { headers: address ? { 'x-forwarded-for': address } : {} });
  const html = await res.text();
  const csrf = /name="_csrf" value="([^"]+)"/.exec(html)?.[1];
  const cookie = (res.headers.getSetCookie?.() ?? []).map((c) => c.split(';')[0]).join('; ');
  if (res.status !== 200 || !csrf) throw new Error(`code page gave ${res.status}`);
  return { cookie, csrf, ...(address ? { address } : {}) };
}

export interface CastResult {
  status: number;
  receipt: string | null;
}

/** A member's browser at the read-back page: its cookies (step cookie included) and the cast form it shows. */
export interface PreparedCast {
  base: string;
  cookie: string;
  address?: string;
  form: { action: string; fields: [string, string][] };
}

/**
 * Walks one member's browser (starting from `m`'s token cookie) through the code and ballot steps
 * to the read-back page (test/helpers/memberWalk.ts). Throws StepFailed when a step is refused.
 */
export async function prepareCast(
  base: string,
  m: Member,
  electionId: string,
  code: string,
  approvals: number[],
  signal?: AbortSignal,
): Promise<PreparedCast> {
  const jar = new CookieJar();
  jar.take(m.cookie.split('; ').filter(Boolean));
  const browser = fetchMember(base, { jar, signal, ...(m.address ? { address: m.address } : {}) });
  const confirm = await toConfirm(browser, electionId, code, approvals);
  return { base, cookie: jar.header(), ...(m.address ? { address: m.address } : {}), form: hiddenFields(confirm.text, `/vote/${electionId}/cast`) };
}

/** Sends the prepared cast; on 303 reads the receipt page with the cookies that answer set. */
export async function sendCast(p: PreparedCast, signal?: AbortSignal): Promise<CastResult> {
  const from: Record<string, string> = p.address ? { 'x-forwarded-for': p.address } : {};
  const res = await fetch(new URL(p.form.action, p.base), {
    method: 'POST',
    redirect: 'manual',
    headers: { 'content-type': 'application/x-www-form-urlencoded', cookie: p.cookie, ...from },
    body: new URLSearchParams(p.form.fields),
    signal,
  });
  await res.arrayBuffer();
  if (res.status !== 303) return { status: res.status, receipt: null };
  // Post/redirect/get: the receipt is shown once, to the browser holding the receipt cookie.
  const jar = new CookieJar();
  jar.take(p.cookie.split('; ').filter(Boolean));
  jar.take(res.headers.getSetCookie?.() ?? []);
  const page = await fetch(new URL(res.headers.get('location')!, p.base), { headers: { cookie: jar.header(), ...from }, signal });
  const html = await page.text();
  return { status: page.status, receipt: page.status === 200 ? (/<p class="receipt">([^<]+)<\/p>/.exec(html)?.[1] ?? null) : null };
}

/** The whole walk for one cast; a refused step is its answer (a status, no receipt). */
export async function cast(...walk: Parameters<typeof prepareCast>): Promise<CastResult> {
  const signal = walk[5];
  let prepared: PreparedCast;
  try {
    prepared = await prepareCast(...walk);
  } catch (e) {
    if (e instanceof StepFailed) return { status: e.status, receipt: null };
    throw e;
  }
  return sendCast(prepared, signal);
}

/** Runs `work(i)` for i in [0, count) on `clients` concurrent workers, stopping early at `deadline`. */
export async function pool<T>(count: number, clients: number, deadlineMs: number, work: (i: number, client: number) => Promise<T>): Promise<T[]> {
  const out: T[] = [];
  let next = 0;
  const stopAt = Date.now() + deadlineMs;
  await Promise.all(
    Array.from({ length: clients }, async (_x, client) => {
      while (next < count && Date.now() < stopAt) {
        const i = next++;
        out[i] = await work(i, client);
      }
    }),
  );
  return out;
}

export async function countRows(db: Database, table: string, electionId: string, where: Record<string, unknown> = {}): Promise<number> {
  return toCount(
    (
      await db
        .knex(table)
        .where({ election_id: electionId, ...where })
        .count({ n: '*' })
        .first()
    )?.n,
  );
}

/** Figures for the table printed at the end of the suite (see _summary.ts). */
export interface Figures {
  requests?: number;
  accepted?: number;
  rejected?: number;
  lost?: number;
  duplicated?: number;
  serverErrors?: number;
  killsSurvived?: number;
  /** A figure the columns do not hold (a latency, a ratio), printed under the table. */
  note?: string;
}

export function record(name: string, f: Figures): void {
  const file = process.env.VT_RELIABILITY_RESULTS;
  if (!file) return;
  fs.appendFileSync(file, JSON.stringify({ name, ...f }) + '\n');
}
