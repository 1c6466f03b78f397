import crypto from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { VeiltallyError } from '../errors.ts';

/**
 * One writer per embedded data directory. Two processes on one PGlite directory each keep their
 * own copy of the pages in memory and overwrite each other's writes, so the server and every
 * command that opens the directory take this lock first.
 *
 * Hand-written rather than proper-lockfile: that library decides staleness by the lock's age
 * (a timer refreshes its mtime), so a server restarted right after a crash would wait out the
 * stale period, a busy event loop could lose the lock, and it records no holder to name. We need
 * the holder's pid in the refusal line and an immediate, safe takeover when that pid is gone, which
 * a pid liveness check gives (`kill(pid, 0)`, POSIX: signal 0 checks existence only).
 */
export class DataDirectoryLocked extends VeiltallyError {
  readonly code = 'DataDirectoryLocked';
  override readonly status = 409;
  constructor(
    readonly directory: string,
    readonly holderPid: number,
    readonly holderHost: string,
  ) {
    super(
      `the data directory ${directory} is in use by process ${holderPid}` +
        (holderHost === os.hostname() ? '' : ` on host ${holderHost}`) +
        '; stop that process first (only one process may open the embedded database at a time)',
    );
  }
}

interface Holder {
  pid: number;
  host: string;
  token: string;
}

export interface DirectoryLock {
  readonly file: string;
  release(): void;
}

const LOCK_NAME = 'veiltally.lock';
const heldHere = new Set<string>();
/** A lock file with no readable holder, older than this, was left by a crash between create and write. */
const UNREADABLE_GRACE_MS = 5_000;

function alive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (e) {
    // EPERM: the process exists but belongs to another user.
    return (e as NodeJS.ErrnoException).code === 'EPERM';
  }
}

function readHolder(file: string): { holder: Holder | null; raw: string } | null {
  let raw: string;
  try {
    raw = fs.readFileSync(file, 'utf8');
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code === 'ENOENT') return null;
    throw e;
  }
  try {
    const v = JSON.parse(raw) as Partial<Holder>;
    if (Number.isSafeInteger(v.pid) && typeof v.host === 'string' && typeof v.token === 'string') {
      return { holder: v as Holder, raw };
    }
  } catch {
    /* half-written or damaged */
  }
  return { holder: null, raw };
}

function sleepSync(ms: number): void {
  Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, ms);
}

/**
 * Takes the lock on `directory` or throws DataDirectoryLocked naming the live holder.
 * Synchronous, so it runs before anything opens the database files.
 */
export function lockDataDirectory(directory: string): DirectoryLock {
  fs.mkdirSync(directory, { recursive: true, mode: 0o700 });
  const file = path.join(directory, LOCK_NAME);
  const me: Holder = { pid: process.pid, host: os.hostname(), token: crypto.randomBytes(16).toString('hex') };
  const content = JSON.stringify(me) + '\n';
  // Opening the same directory twice in one process is the same mistake as in two.
  if (heldHere.has(file)) throw new DataDirectoryLocked(directory, process.pid, me.host);

  for (let attempt = 0; attempt < 50; attempt++) {
    try {
      fs.writeFileSync(file, content, { flag: 'wx', mode: 0o600 });
      heldHere.add(file);
      return makeLock(file, me.token);
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code !== 'EEXIST') throw e;
    }
    const seen = readHolder(file);
    if (!seen) continue; // released meanwhile: try again
    const { holder, raw } = seen;
    if (!holder) {
      let age: number;
      try {
        age = Date.now() - fs.statSync(file).mtimeMs;
      } catch {
        continue;
      }
      if (age < UNREADABLE_GRACE_MS) {
        sleepSync(100);
        continue;
      }
    } else if (holder.host !== me.host) {
      // Liveness cannot be checked across machines: refuse rather than guess.
      throw new DataDirectoryLocked(directory, holder.pid, holder.host);
    } else if (holder.pid !== process.pid && alive(holder.pid)) {
      throw new DataDirectoryLocked(directory, holder.pid, holder.host);
    }
    // Stale (its process is gone, or it is our own pid from before a restart in a fresh pid
    // namespace). Move it aside atomically: of two processes taking over at once, only one
    // rename finds the file. If what we moved is no longer the stale lock we read (another
    // process took over between our read and our rename), put it back.
    const aside = `${file}.stale-${process.pid}-${crypto.randomBytes(4).toString('hex')}`;
    try {
      fs.renameSync(file, aside);
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code === 'ENOENT') continue;
      throw e;
    }
    const moved = fs.readFileSync(aside, 'utf8');
    if (moved !== raw) {
      try {
        fs.linkSync(aside, file);
      } catch {
        /* a third process already locked again; its lock stands */
      }
    }
    fs.rmSync(aside, { force: true });
  }
  const last = readHolder(file)?.holder;
  throw new DataDirectoryLocked(directory, last?.pid ?? 0, last?.host ?? me.host);
}

function makeLock(file: string, token: string): DirectoryLock {
  let held = true;
  const release = () => {
    if (!held) return;
    held = false;
    heldHere.delete(file);
    process.off('exit', release);
    // Remove only our own lock: never one a later process took over.
    if (readHolder(file)?.holder?.token === token) fs.rmSync(file, { force: true });
  };
  process.on('exit', release);
  return { file, release };
}
