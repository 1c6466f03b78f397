import fs from 'node:fs';
import path from 'node:path';
import { openBallot, openingKey, unwrapElectionKey, uuidBytes, wipe, type KdfParams } from '../../../src/custody/index.ts';
import { sodium } from '../../../src/custody/sodium.ts';
import { toBuffer } from '../../../src/db/knex.ts';
import type { TestDatabase } from '../../helpers/databases.ts';

/**
 * A thief's carve of the write-ahead log: no database, only the WAL's bytes, the tally passphrase,
 * the election's public id and option count (both on its public page), and the Argon2id cost the
 * instance uses. Rows are found the way a forensic carver finds them: the election id's 16 bytes
 * (uuid columns are stored as 16 raw bytes) and, close after them, what the row holds.
 *  - wrapped keys: base64 strings of the wrapped key's three sizes (salt 16, nonce 24, ciphertext
 *    48 bytes) within a kilobyte after the election id, every combination tried with the passphrase;
 *  - ballots: a ballots row is id, election_id, sealed (16 + 16 bytes, then a short varlena whose
 *    one-byte header is (length + 1) << 1 | 1, PostgreSQL's varatt.h on a little-endian machine),
 *    so every place where the election id is followed by such a header is tried as a ballot.
 * `outer` also tries the layer the product adds under a per-election key file: what a backup of
 * the key directory taken before the shred would give the thief (crypto_aead_xchacha20poly1305).
 */
export interface CarveResult {
  /** Distinct wrapped keys found that opened with the passphrase. */
  keysOpened: number;
  /** Ballot-shaped byte strings found next to the election id. */
  ballotCandidates: number;
  /** Distinct ballots that opened with a key found. */
  ballotsOpened: number;
}

export interface CarveInput {
  wal: Buffer;
  electionId: string;
  optionCount: number;
  passphrase: string;
  kdf: KdfParams;
  /** A secret key known some other way (a teller's copy): ballots are tried with it too. */
  knownSecretKey?: Buffer;
  /** Strip an outer layer with this per-election key before trying (the key file, from an old backup). */
  outer?: { open(kind: 'wrapped-key' | 'ballot', sealed: Buffer): Buffer | null };
}

const B64_RUN = /[A-Za-z0-9+/]{20,}={0,2}/g;

/**
 * Base64 strings in a window, by decoded size. A stored JSON value's strings can sit right after its
 * key names (jsonb keeps keys, then values), which are base64 letters too, so every suffix of a run
 * starting within its first 64 characters is a candidate.
 */
function base64Runs(window: Buffer): Map<number, string[]> {
  const bySize = new Map<number, string[]>();
  for (const m of window.toString('latin1').matchAll(B64_RUN)) {
    for (let start = 0; start < Math.min(64, m[0].length - 20); start++) {
      const s = m[0].slice(start);
      if (s.length % 4 !== 0) continue;
      const n = Buffer.from(s, 'base64').length;
      const list = bySize.get(n) ?? [];
      if (!list.includes(s)) list.push(s);
      bySize.set(n, list);
    }
  }
  return bySize;
}

function positions(hay: Buffer, needle: Buffer): number[] {
  const out: number[] = [];
  for (let at = hay.indexOf(needle); at !== -1; at = hay.indexOf(needle, at + 1)) out.push(at);
  return out;
}

export async function carve(input: CarveInput): Promise<CarveResult> {
  const idBytes = uuidBytes(input.electionId);
  const at = positions(input.wal, idBytes);
  const secretKeys = new Map<string, Buffer>();
  if (input.knownSecretKey) secretKeys.set(input.knownSecretKey.toString('hex'), input.knownSecretKey);
  let keysOpened = 0;

  // Wrapped keys.
  const tried = new Set<string>();
  // An UPDATE's WAL record may leave out the bytes the new row shares with the old one (the id
  // among them: PostgreSQL's heapam.c, log_heap_update, prefix and suffix compression), so wrapped
  // keys are also looked for around the stored JSON's own key names.
  const anchors = [
    ...at,
    ...positions(input.wal, Buffer.from('ciphertext')).map((p) => Math.max(0, p - 512)),
    ...positions(input.wal, Buffer.from('sealed')).map((p) => Math.max(0, p - 512)),
  ];
  for (const p of anchors) {
    const windows: Buffer[] = [input.wal.subarray(p, p + 1024)];
    if (input.outer) {
      // An outer envelope is one base64 string; opened, it is the wrapped key's JSON.
      for (const runs of base64Runs(windows[0]!).values()) {
        for (const s of runs) {
          const inner = input.outer.open('wrapped-key', Buffer.from(s, 'base64'));
          if (inner) windows.push(inner);
        }
      }
    }
    for (const w of windows) {
      const runs = base64Runs(w);
      for (const salt of runs.get(16) ?? [])
        for (const nonce of runs.get(24) ?? [])
          for (const ciphertext of runs.get(48) ?? []) {
            const k = `${salt}/${nonce}/${ciphertext}`;
            if (tried.has(k)) continue;
            tried.add(k);
            try {
              const sk = await unwrapElectionKey({ version: 1, kdf: input.kdf, salt, nonce, ciphertext }, input.passphrase, input.electionId);
              if (!secretKeys.has(sk.toString('hex'))) keysOpened++;
              secretKeys.set(sk.toString('hex'), sk);
            } catch {
              // not a wrapped key of this election, or not under this passphrase
            }
          }
    }
  }

  // Ballots.
  const plainLength = 17 + Math.ceil(input.optionCount / 8) + sodium.crypto_box_SEALBYTES;
  const lengths = [plainLength, plainLength + 24 + 16];
  let ballotCandidates = 0;
  const opened = new Set<string>();
  for (const p of at) {
    const h = p + 16;
    for (const len of lengths) {
      if (input.wal[h] !== (((len + 1) << 1) | 1)) continue;
      const bytes = Buffer.from(input.wal.subarray(h + 1, h + 1 + len));
      ballotCandidates++;
      const tries: Buffer[] = [bytes];
      if (input.outer) {
        const o = input.outer.open('ballot', bytes);
        if (o) tries.push(o);
      }
      for (const sealed of tries) {
        for (const sk of secretKeys.values()) {
          const pk = Buffer.alloc(sodium.crypto_box_PUBLICKEYBYTES);
          sodium.crypto_scalarmult_base(pk, sk);
          try {
            openBallot(openingKey(pk, sk, input.electionId, input.optionCount), sealed);
            opened.add(sealed.toString('hex'));
          } catch {
            // not a ballot that opens under this key
          }
        }
      }
    }
  }
  for (const sk of secretKeys.values()) if (sk !== input.knownSecretKey) wipe(sk);
  return { keysOpened, ballotCandidates, ballotsOpened: opened.size };
}

/** Every write-ahead log segment of the embedded directory. */
export function pgliteWal(dataDir: string): Buffer {
  const dir = path.join(dataDir, 'pglite', 'pg_wal');
  return Buffer.concat(
    fs
      .readdirSync(dir)
      .filter((n) => /^[0-9A-F]{24}$/.test(n))
      .map((n) => fs.readFileSync(path.join(dir, n))),
  );
}

/**
 * Every WAL segment of the PostgreSQL server, read through SQL as the (superuser) test role:
 * pg_ls_waldir and pg_read_binary_file (PostgreSQL 15 documentation, §9.27.10 "Generic File Access Functions").
 */
export async function postgresWal(db: TestDatabase): Promise<Buffer> {
  const names = (await db.knex.raw('SELECT name FROM pg_ls_waldir() ORDER BY name')).rows as Array<{ name: string }>;
  const out: Buffer[] = [];
  for (const { name } of names) {
    if (!/^[0-9A-F]{24}$/.test(name)) continue;
    out.push(toBuffer((await db.knex.raw('SELECT pg_read_binary_file(?) AS b', [`pg_wal/${name}`])).rows[0].b));
  }
  return Buffer.concat(out);
}
