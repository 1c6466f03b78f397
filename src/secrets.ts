import crypto from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import type { Config } from './config.ts';
import type { InstanceSecrets } from './elections/context.ts';

/**
 * Secrets this instance keeps in its data directory (mode 0600), created once on first start.
 * Config may supply them instead, so several app servers on one database share the same values.
 */
function readOrCreate(dir: string, name: string, bytes: number): Buffer {
  const file = path.join(dir, name);
  try {
    const hex = fs.readFileSync(file, 'utf8').trim();
    if (!/^[0-9a-f]+$/i.test(hex) || hex.length !== bytes * 2) {
      throw new Error(`${file} is damaged: expected ${bytes * 2} hexadecimal characters`);
    }
    return Buffer.from(hex, 'hex');
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code !== 'ENOENT') throw e;
  }
  fs.mkdirSync(dir, { recursive: true, mode: 0o700 });
  const value = crypto.randomBytes(bytes);
  // 'wx' fails if another process created it first; then we read theirs.
  try {
    fs.writeFileSync(file, value.toString('hex') + '\n', { mode: 0o600, flag: 'wx' });
    return value;
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code === 'EEXIST') return readOrCreate(dir, name, bytes);
    throw e;
  }
}

/** The file `veiltally key add` replaces to rotate the statement-signing key. */
export const SIGNING_SEED_FILE = 'signing-seed';

export interface AllSecrets extends InstanceSecrets {
  readonly sessionSecret: string;
}

export function loadSecrets(config: Config): AllSecrets {
  const dir = path.join(config.dataDir, 'secrets');
  return Object.freeze({
    sessionSecret: config.sessionSecret ?? readOrCreate(dir, 'session-secret', 32).toString('hex'),
    codePepper: config.codePepperHex ? Buffer.from(config.codePepperHex, 'hex') : readOrCreate(dir, 'code-pepper', 32),
    signingSeed: config.signingSeedHex ? Buffer.from(config.signingSeedHex, 'hex') : readOrCreate(dir, SIGNING_SEED_FILE, 32),
  });
}
