import { describe, expect, it } from 'vitest';
import path from 'node:path';
import { ConfigError, loadConfig } from '../../../src/config.ts';

describe('config', () => {
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
      trustProxy: true,
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
