import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import net from 'node:net';
import { fileURLToPath } from 'node:url';

export const REPO_ROOT = fileURLToPath(new URL('../../', import.meta.url));

export async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = net.createServer();
    srv.listen(0, '127.0.0.1', () => {
      const a = srv.address();
      srv.close(() => (typeof a === 'object' && a ? resolve(a.port) : reject(new Error('no port'))));
    });
  });
}

export interface RunningServer {
  url: string;
  dataDir: string;
  child: ChildProcess;
  output(): string;
  stop(signal?: NodeJS.Signals): Promise<number | null>;
}

/** Starts the real server (`node --import tsx src/main.ts`) on a free port with its own data dir. */
export async function startServer(env: Record<string, string> = {}, dataDir?: string): Promise<RunningServer> {
  const port = await freePort();
  const dir = dataDir ?? fs.mkdtempSync(path.join(os.tmpdir(), 'vt-srv-'));
  let out = '';
  const child = spawn(process.execPath, ['--import', 'tsx', 'src/main.ts'], {
    cwd: REPO_ROOT,
    env: { ...process.env, PORT: String(port), HOST: '127.0.0.1', VEILTALLY_DATA_DIR: dir, LOG_LEVEL: 'info', ...env },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  child.stdout!.on('data', (d) => (out += d));
  child.stderr!.on('data', (d) => (out += d));
  const url = `http://127.0.0.1:${port}`;
  const exited = new Promise<number | null>((resolve) => child.once('exit', (code) => resolve(code)));
  // A loaded machine may need longer: VEILTALLY_TEST_START_SECONDS raises the wait (default 30).
  const waitSeconds = Number(process.env.VEILTALLY_TEST_START_SECONDS ?? 30);
  const deadline = Date.now() + waitSeconds * 1000;
  for (;;) {
    if (child.exitCode !== null) throw new Error(`server exited early: ${out}`);
    try {
      const res = await fetch(`${url}/healthz`);
      if (res.ok) break;
    } catch {
      /* not listening yet */
    }
    if (Date.now() > deadline) {
      child.kill('SIGKILL');
      throw new Error(`server did not answer /healthz within ${waitSeconds} s: ${out}`);
    }
    await new Promise((r) => setTimeout(r, 150));
  }
  return {
    url,
    dataDir: dir,
    child,
    output: () => out,
    stop: async (signal = 'SIGTERM') => {
      if (child.exitCode === null) child.kill(signal);
      return exited;
    },
  };
}
