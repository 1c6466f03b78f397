import crypto from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { ElectionKeyFileMissing } from '../../../src/elections/errors.ts';
import { keyDirectory } from '../../../src/keyfiles/keyDirectory.ts';

describe('the election key directory', () => {
  const root = fs.mkdtempSync(path.join(os.tmpdir(), 'vt-keydir-'));
  afterAll(() => fs.rmSync(root, { recursive: true, force: true }));
  const dir = path.join(root, 'election-keys');
  const keys = keyDirectory(dir);
  const id = crypto.randomUUID();

  it('writes a key once (0600 in a 0700 directory), reads it back, refuses to replace it, and deletes it', async () => {
    await expect(keys.read(id)).rejects.toBeInstanceOf(ElectionKeyFileMissing);
    const key = crypto.randomBytes(32);
    await keys.write(id, key);
    expect(fs.statSync(dir).mode & 0o777).toBe(0o700);
    expect(fs.statSync(path.join(dir, `${id}.key`)).mode & 0o777).toBe(0o600);
    await expect(keys.read(id.toUpperCase())).resolves.toEqual(key);
    await expect(keys.has(id)).resolves.toBe(true);
    await expect(keys.write(id, crypto.randomBytes(32))).rejects.toMatchObject({ code: 'EEXIST' });
    await expect(keys.read(id)).resolves.toEqual(key);
    expect(await keys.list()).toEqual([id]);
    expect(fs.readdirSync(dir)).toEqual([`${id}.key`]); // no temporary file left behind
    await keys.remove(id);
    await keys.remove(id); // already gone: no error
    await expect(keys.has(id)).resolves.toBe(false);
    await expect(keys.read(id)).rejects.toBeInstanceOf(ElectionKeyFileMissing);
  });

  it('treats a damaged key file as missing, and refuses ids that are not UUIDs (no path is built from them)', async () => {
    const other = crypto.randomUUID();
    fs.writeFileSync(path.join(dir, `${other}.key`), Buffer.alloc(5));
    await expect(keys.read(other)).rejects.toBeInstanceOf(ElectionKeyFileMissing);
    await expect(keys.write('../escape', crypto.randomBytes(32))).rejects.toBeInstanceOf(RangeError);
    const err = await keys.read(other).catch((e: unknown) => e);
    expect(String((err as Error).message)).not.toContain(dir); // the page names no path
  });
});
