import { afterAll, describe, expect, it } from 'vitest';
import { spawn, spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { DataDirectoryLocked, lockDataDirectory } from '../../../src/db/dirLock.ts';
import { openDatabase } from '../../../src/db/knex.ts';
import { REPO_ROOT, freePort, startServer, type RunningServer } from '../../helpers/server.ts';

const dirs: string[] = [];
const tmpDir = () => {
  const d = fs.mkdtempSync(path.join(os.tmpdir(), 'vt-lock-'));
  dirs.push(d);
  return d;
};
afterAll(() => dirs.forEach((d) => fs.rmSync(d, { recursive: true, force: true })));

/** A process that has certainly exited, so its pid is free (for a stale lock). */
function deadPid(): number {
  const r = spawnSync(process.execPath, ['-e', 'process.stdout.write(String(process.pid))']);
  return Number(r.stdout.toString());
}

describe('one process per embedded data directory [pglite]', () => {
  it('takes over a lock left by a process that is gone, and refuses one held by a live process', () => {
    const dir = tmpDir();
    fs.writeFileSync(path.join(dir, 'veiltally.lock'), JSON.stringify({ pid: deadPid(), host: os.hostname(), token: 'x' }));
    const lock = lockDataDirectory(dir);
    lock.release();
    expect(fs.existsSync(path.join(dir, 'veiltally.lock'))).toBe(false);

    fs.writeFileSync(path.join(dir, 'veiltally.lock'), JSON.stringify({ pid: process.ppid, host: os.hostname(), token: 'y' }));
    expect(() => lockDataDirectory(dir)).toThrow(DataDirectoryLocked);
    expect(() => lockDataDirectory(dir)).toThrow(`process ${process.ppid}`);
  });

  it('refuses a second open in the same process until the first is closed', async () => {
    const dir = tmpDir();
    const first = openDatabase({ engine: 'pglite', dataDir: dir });
    expect(() => openDatabase({ engine: 'pglite', dataDir: dir })).toThrow(DataDirectoryLocked);
    await first.close();
    const second = openDatabase({ engine: 'pglite', dataDir: dir });
    await second.close();
  });

  it('a second server and the migrate command exit at once naming the directory and the holder; after a kill -9 the server starts again', async () => {
    const dir = tmpDir();
    let server: RunningServer | null = await startServer({}, dir);
    try {
      const port = await freePort();
      const env = { ...process.env, PORT: String(port), HOST: '127.0.0.1', VEILTALLY_DATA_DIR: dir, LOG_LEVEL: 'info' };
      const second = spawn(process.execPath, ['--import', 'tsx', 'src/main.ts'], { cwd: REPO_ROOT, env, stdio: ['ignore', 'pipe', 'pipe'] });
      let err = '';
      second.stderr.on('data', (d) => (err += d));
      second.stdout.on('data', (d) => (err += d));
      const code = await new Promise<number | null>((resolve) => second.once('exit', resolve));
      expect(code).toBe(1);
      const lines = err.trim().split('\n');
      expect(lines).toHaveLength(1);
      expect(lines[0]).toContain(dir);
      expect(lines[0]).toContain(`process ${server.child.pid}`);

      const migrate = spawnSync(process.execPath, ['src/cli/bin.mjs', 'migrate'], { cwd: REPO_ROOT, env, encoding: 'utf8' });
      expect(migrate.status).not.toBe(0);
      expect(migrate.stderr).toContain(dir);
      expect(migrate.stderr).toContain(`process ${server.child.pid}`);

      await server.stop('SIGKILL');
      server = await startServer({}, dir);
      expect((await fetch(`${server.url}/healthz`)).ok).toBe(true);
    } finally {
      await server?.stop();
    }
  }, 180_000);
});
