import { describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { REPO_ROOT, startServer } from '../../helpers/server.ts';

describe('the server process [pglite]', () => {
  it('starts, logs its URL, serves /healthz and stops cleanly on SIGTERM', async () => {
    const server = await startServer();
    const res = await fetch(`${server.url}/healthz`);
    expect(await res.json()).toEqual({ status: 'ok', db: 'pglite' });
    expect(server.output()).toContain(`Veiltally listening on ${server.url}`);
    expect(await server.stop('SIGTERM')).toBe(0);
    expect(server.output()).toContain('stopped');
  });

  it('restarts on the same data directory and keeps its instance secrets (mode 0600)', async () => {
    const first = await startServer();
    await first.stop();
    const secretFile = path.join(first.dataDir, 'secrets', 'session-secret');
    const before = fs.readFileSync(secretFile, 'utf8');
    expect(fs.statSync(secretFile).mode & 0o777).toBe(0o600);
    const second = await startServer({}, first.dataDir);
    expect((await fetch(`${second.url}/healthz`)).status).toBe(200);
    expect(await second.stop()).toBe(0);
    expect(fs.readFileSync(secretFile, 'utf8')).toBe(before);
  });

  it('exits with one clear line naming a bad variable, no stack trace', () => {
    const r = spawnSync(process.execPath, ['--import', 'tsx', 'src/main.ts'], {
      cwd: REPO_ROOT,
      env: { ...process.env, PORT: 'eighty' },
      encoding: 'utf8',
    });
    expect(r.status).toBe(1);
    const lines = r.stderr.trim().split('\n');
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/^veiltally: bad configuration, PORT: /);
    expect(r.stderr).not.toContain('    at ');
  });
});

describe('the veiltally command', () => {
  it('prints help', () => {
    const r = spawnSync(process.execPath, ['src/cli/bin.mjs', '--help'], { cwd: REPO_ROOT, encoding: 'utf8' });
    expect(r.status).toBe(0);
    expect(r.stdout).toContain('Usage: veiltally <command>');
    expect(r.stdout).toContain('migrate');
  });

  it('rejects an unknown command with exit code 2 and one line', () => {
    const r = spawnSync(process.execPath, ['src/cli/bin.mjs', 'frobnicate'], { cwd: REPO_ROOT, encoding: 'utf8' });
    expect(r.status).toBe(2);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
  });
});
