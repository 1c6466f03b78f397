import { spawn } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { REPO_ROOT, freePort } from '../../helpers/server.ts';

async function answers(url: string): Promise<boolean> {
  try {
    return (await fetch(url, { signal: AbortSignal.timeout(2000) })).ok;
  } catch {
    return false;
  }
}

// `npm start` runs through a shell; a signal to npm must reach the server itself, or the server
// lives on as an orphan holding the port and the embedded database.
describe('npm start [pglite]', () => {
  it('serves /healthz and the statement schema from the compiled build, and SIGTERM to npm stops the server', { timeout: 240_000 }, async () => {
    const port = await freePort();
    const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'vt-npm-'));
    const npm = spawn('npm', ['start', '--silent'], {
      cwd: REPO_ROOT,
      env: { ...process.env, PORT: String(port), HOST: '127.0.0.1', VEILTALLY_DATA_DIR: dataDir },
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    let out = '';
    npm.stdout.on('data', (d) => (out += d));
    npm.stderr.on('data', (d) => (out += d));
    const exited = new Promise<void>((resolve) => npm.once('exit', () => resolve()));
    const url = `http://127.0.0.1:${port}/healthz`;
    const deadline = Date.now() + 200_000;
    while (!(await answers(url))) {
      if (npm.exitCode !== null || Date.now() > deadline) throw new Error(`npm start did not serve /healthz: ${out}`);
      await new Promise((r) => setTimeout(r, 200));
    }
    expect(fs.existsSync(path.join(REPO_ROOT, 'dist', 'src', 'main.js'))).toBe(true);
    // Files the compiled code reads from disk travel with the build: the statement's JSON Schema.
    const schema = await fetch(`http://127.0.0.1:${port}/schemas/statement-v1.schema.json`);
    expect(schema.status).toBe(200);
    expect(((await schema.json()) as { $schema?: string }).$schema).toMatch(/2020-12/);

    npm.kill('SIGTERM');
    await exited;
    // The server must be gone too, not merely npm.
    const gone = Date.now() + 15_000;
    while ((await answers(url)) && Date.now() < gone) await new Promise((r) => setTimeout(r, 200));
    expect(await answers(url)).toBe(false);
    expect(out).toContain('stopped');
  });
});
