import { describe, expect, it } from 'vitest';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { ConfigError, loadConfig } from '../../../src/config.ts';

describe('config', () => {
  it('reads TRUST_PROXY as nobody, a hop count or a list of proxy addresses', () => {
    expect(loadConfig({ TRUST_PROXY: 'false' }).trustProxy).toBe(false);
    expect(loadConfig({ TRUST_PROXY: '2' }).trustProxy).toBe(2);
    expect(loadConfig({ TRUST_PROXY: 'loopback, 10.0.0.0/8,fd00::1' }).trustProxy).toEqual(['loopback', '10.0.0.0/8', 'fd00::1']);
  });

  it('refuses https PUBLIC_URL without TRUST_PROXY with a line saying what to set', () => {
    expect(() => loadConfig({ PUBLIC_URL: 'https://vote.example.org' })).toThrow(/TRUST_PROXY: .*set TRUST_PROXY to/);
    expect(loadConfig({ PUBLIC_URL: 'https://vote.example.org', TRUST_PROXY: 'loopback' }).publicUrl).toBe('https://vote.example.org');
  });

  it('reads each instance secret from the environment or from a file, not both', () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'vt-cfg-'));
    const pepper = 'ab'.repeat(32);
    fs.writeFileSync(path.join(dir, 'pepper'), `${pepper}\n`);
    fs.writeFileSync(path.join(dir, 'seed'), 'cd'.repeat(32));
    fs.writeFileSync(path.join(dir, 'session'), 's'.repeat(40));
    const c = loadConfig({
      VEILTALLY_CODE_PEPPER_FILE: path.join(dir, 'pepper'),
      VEILTALLY_SIGNING_SEED_FILE: path.join(dir, 'seed'),
      SESSION_SECRET_FILE: path.join(dir, 'session'),
    });
    expect([c.codePepperHex, c.signingSeedHex, c.sessionSecret]).toEqual([pepper, 'cd'.repeat(32), 's'.repeat(40)]);
    expect(loadConfig({ VEILTALLY_SIGNING_SEED: 'ef'.repeat(32) }).signingSeedHex).toBe('ef'.repeat(32));
    expect(() => loadConfig({ VEILTALLY_CODE_PEPPER: pepper, VEILTALLY_CODE_PEPPER_FILE: path.join(dir, 'pepper') })).toThrow(/not both/);
    fs.rmSync(dir, { recursive: true });
  });

  it('keeps the preview of a drawn result to at most 48 hours (every draw is published)', () => {
    expect(loadConfig({}).previewMs).toBe(48 * 3600_000);
    expect(loadConfig({ VEILTALLY_PREVIEW_HOURS: '2' }).previewMs).toBe(2 * 3600_000);
    expect(() => loadConfig({ VEILTALLY_PREVIEW_HOURS: '49' })).toThrow(/VEILTALLY_PREVIEW_HOURS: must be at most 48/);
    expect(() => loadConfig({ VEILTALLY_PREVIEW_HOURS: '-1' })).toThrow(/VEILTALLY_PREVIEW_HOURS/);
  });

  it('has working defaults and is frozen', () => {
    const c = loadConfig({});
    expect(c.port).toBe(3000);
    expect(c.host).toBe('127.0.0.1');
    expect(c.databaseUrl).toBeUndefined();
    expect(c.dataDir).toBe(path.resolve('./data'));
    expect(c.publicUrl).toBe('http://127.0.0.1:3000');
    expect(c.trustProxy).toBe(false);
    expect(c.logLevel).toBe('info');
    expect(Object.isFrozen(c)).toBe(true);
  });

  it('reads every variable', () => {
    const c = loadConfig({
      PORT: '8080',
      HOST: '0.0.0.0',
      DATABASE_URL: 'postgres://u@db:5432/vt',
      VEILTALLY_DATA_DIR: '/var/lib/veiltally',
      SESSION_SECRET: 'x'.repeat(40),
      PUBLIC_URL: 'https://vote.example.org/',
      TRUST_PROXY: 'true',
      LOG_LEVEL: 'warn',
    });
    expect(c).toMatchObject({
      port: 8080,
      host: '0.0.0.0',
      databaseUrl: 'postgres://u@db:5432/vt',
      dataDir: '/var/lib/veiltally',
      publicUrl: 'https://vote.example.org',
      trustProxy: ['loopback'],
      logLevel: 'warn',
    });
  });

  it.each([
    ['PORT', 'eighty'],
    ['PORT', '70000'],
    ['DATABASE_URL', 'mysql://x'],
    ['SESSION_SECRET', 'short'],
    ['TRUST_PROXY', 'maybe'],
    ['LOG_LEVEL', 'loud'],
    ['PUBLIC_URL', 'vote.example.org'],
    ['VEILTALLY_CODE_PEPPER', 'abc'],
    ['VEILTALLY_SIGNING_SEED', 'abc'],
    ['TRUST_PROXY', '10.0.0.1/99'],
    ['TRUST_PROXY', '0.5'],
    ['SESSION_SECRET_FILE', '/nonexistent/secret'],
  ])('rejects a bad %s with an error naming it', (variable, value) => {
    let error: unknown;
    try {
      loadConfig({ [variable]: value });
    } catch (e) {
      error = e;
    }
    expect(error).toBeInstanceOf(ConfigError);
    expect((error as ConfigError).variable).toBe(variable);
    expect((error as ConfigError).message.startsWith(`${variable}: `)).toBe(true);
  });
});
