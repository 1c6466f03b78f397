import { randomBytes } from 'node:crypto';
import fs from 'node:fs/promises';
import path from 'node:path';
import { SHRED_KEY_BYTES, isUuid } from '../custody/index.ts';
import { ElectionKeyFileMissing } from '../elections/errors.ts';
import type { ElectionKeyFiles } from '../elections/keyFilePort.ts';

/**
 * Election key files in one directory (VEILTALLY_KEY_DIR): `<election id>.key`, 32 raw bytes, mode
 * 0600 in a 0700 directory. A key is written to a temporary name, flushed (fsync), linked to its
 * name (link refuses to replace an existing key) and the directory flushed, so once write() resolves
 * the key survives a crash; only then does the election's row refer to it. remove() unlinks and
 * flushes the directory, so a shred that returned is not undone by a power cut. (POSIX fsync:
 * a file's new directory entry is durable only once the directory itself is synced.)
 */
export function keyDirectory(dir: string): ElectionKeyFiles {
  const fileOf = (electionId: string): string => {
    if (!isUuid(electionId)) throw new RangeError('an election id is a UUID');
    return path.join(dir, `${electionId.toLowerCase()}.key`);
  };

  async function syncDirectory(): Promise<void> {
    const handle = await fs.open(dir, 'r');
    try {
      await handle.sync();
    } finally {
      await handle.close();
    }
  }

  return {
    async write(electionId, key) {
      if (key.byteLength !== SHRED_KEY_BYTES) throw new RangeError('a shred key is 32 bytes');
      const target = fileOf(electionId);
      await fs.mkdir(dir, { recursive: true, mode: 0o700 });
      const temporary = path.join(dir, `.${electionId.toLowerCase()}.${randomBytes(6).toString('hex')}.tmp`);
      const handle = await fs.open(temporary, 'wx', 0o600);
      try {
        await handle.writeFile(key);
        await handle.sync();
      } finally {
        await handle.close();
      }
      try {
        await fs.link(temporary, target);
      } finally {
        await fs.unlink(temporary);
      }
      await syncDirectory();
    },

    async read(electionId) {
      let bytes: Buffer;
      try {
        bytes = await fs.readFile(fileOf(electionId));
      } catch (e) {
        throw new ElectionKeyFileMissing({ cause: e });
      }
      if (bytes.byteLength !== SHRED_KEY_BYTES) throw new ElectionKeyFileMissing();
      return bytes;
    },

    async has(electionId) {
      try {
        await fs.access(fileOf(electionId));
        return true;
      } catch {
        return false;
      }
    },

    async remove(electionId) {
      try {
        await fs.unlink(fileOf(electionId));
      } catch (e) {
        if ((e as NodeJS.ErrnoException).code === 'ENOENT') return;
        throw e;
      }
      await syncDirectory();
    },

    async list() {
      let names: string[];
      try {
        names = await fs.readdir(dir);
      } catch (e) {
        if ((e as NodeJS.ErrnoException).code === 'ENOENT') return [];
        throw e;
      }
      return names.filter((n) => n.endsWith('.key') && isUuid(n.slice(0, -4))).map((n) => n.slice(0, -4));
    },
  };
}
