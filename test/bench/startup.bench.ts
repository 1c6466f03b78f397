/**
 * Start-up: `npm start` to the first /healthz 200 on a fresh embedded data directory (compiled
 * build, migrations included), and `veiltally --help`, each against a bare `node -e 0` measured
 * in the same run as the ceiling (ratio = how many bare node starts it costs).
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { REPO_ROOT } from '../helpers/server.ts';
import { figure, median, type BenchOptions, type Figure } from './support/figures.ts';
import { startCompiledServer } from './support/server.ts';

function seconds(cmd: string, args: string[]): number {
  const t = performance.now();
  const r = spawnSync(cmd, args, { cwd: REPO_ROOT, stdio: 'ignore' });
  if (r.status !== 0) throw new Error(`${cmd} ${args.join(' ')} exited ${r.status}`);
  return (performance.now() - t) / 1000;
}

export async function run(opts: BenchOptions): Promise<Figure[]> {
  const repeats = opts.quick ? 3 : 7;
  const bare = median(Array.from({ length: repeats }, () => seconds(process.execPath, ['-e', '0'])));
  const help = median(Array.from({ length: repeats }, () => seconds(process.execPath, ['src/cli/bin.mjs', '--help'])));
  const starts: number[] = [];
  for (let i = 0; i < (opts.quick ? 1 : 3); i++) {
    const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'vt-start-'));
    try {
      const server = await startCompiledServer({ VEILTALLY_DATA_DIR: dataDir }, { cmd: 'npm', args: ['start', '--silent'] });
      starts.push(server.readyMs / 1000);
      await server.stop();
    } finally {
      fs.rmSync(dataDir, { recursive: true, force: true });
    }
  }
  return [
    figure('start-up, npm start to first /healthz 200 (fresh embedded dir)', median(starts), 's', bare, { below: 3 }),
    figure('command line, veiltally --help', help, 's', bare, { below: 0.3 }),
  ];
}
