import { spawn, type ChildProcess } from 'node:child_process';
import path from 'node:path';
import { freePort, REPO_ROOT } from '../../helpers/server.ts';

export interface BenchServer {
  url: string;
  child: ChildProcess;
  /** Milliseconds from spawn to the first /healthz 200. */
  readyMs: number;
  stop(): Promise<void>;
}

/**
 * Starts the compiled server (dist/, as `npm start` runs it) as a child process.
 * BENCH_CPU_PROF=DIR writes a V8 CPU profile of the server there when it stops.
 */
export async function startCompiledServer(env: Record<string, string>, command?: { cmd: string; args: string[] }): Promise<BenchServer> {
  const port = await freePort();
  const prof = process.env.BENCH_CPU_PROF ? ['--cpu-prof', `--cpu-prof-dir=${path.resolve(process.env.BENCH_CPU_PROF)}`] : [];
  const { cmd, args } = command ?? { cmd: process.execPath, args: [...prof, 'dist/src/main.js'] };
  const started = performance.now();
  let out = '';
  const child = spawn(cmd, args, {
    cwd: REPO_ROOT,
    env: { ...process.env, PORT: String(port), HOST: '127.0.0.1', LOG_LEVEL: 'info', ...env }, // the request log on, as in production
    stdio: ['ignore', 'ignore', 'pipe'],
  });
  child.stderr!.on('data', (d) => (out += d));
  const exited = new Promise<void>((resolve) => child.once('exit', () => resolve()));
  const url = `http://127.0.0.1:${port}`;
  const deadline = Date.now() + 120_000;
  for (;;) {
    if (child.exitCode !== null) throw new Error(`server exited early: ${out}`);
    try {
      if ((await fetch(`${url}/healthz`)).ok) break;
    } catch {
      /* not listening yet */
    }
    if (Date.now() > deadline) {
      child.kill('SIGKILL');
      throw new Error(`server did not answer /healthz: ${out}`);
    }
    await new Promise((r) => setTimeout(r, 20));
  }
  const readyMs = performance.now() - started;
  return {
    url,
    child,
    readyMs,
    stop: async () => {
      if (child.exitCode === null) child.kill('SIGTERM');
      await exited;
    },
  };
}
