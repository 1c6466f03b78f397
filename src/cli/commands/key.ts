import crypto from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { loadConfig } from '../../config.ts';
import { keyFingerprint } from '../../custody/index.ts';
import { openConfiguredDatabase } from '../../db/configured.ts';
import { migrateLatest } from '../../db/migrate.ts';
import { listSigningKeys, registerSigningKey } from '../../elections/signingKeyRepo.ts';
import { InvalidInput } from '../../errors.ts';
import { SIGNING_SEED_FILE } from '../../secrets.ts';
import { replaceSigningSeedFingerprint } from '../../instanceCheck.ts';
import { parseFlags } from '../args.ts';
import type { Command } from '../io.ts';

const usage = `Usage: veiltally key add [--print]
       veiltally key list

key add    makes a new Ed25519 signing key and registers its public key in the database.
           New statements are signed with it once the server restarts; statements signed
           before keep verifying with the key id they name, since every public key stays
           listed on the /keys page. The new 32-byte seed replaces the one in the data
           directory (${path.join('secrets', SIGNING_SEED_FILE)}); the old seed is overwritten, so
           the old key can sign nothing more.
           --print writes the new seed (hex) to standard output instead, for operators who
           give every instance its secrets in VEILTALLY_SIGNING_SEED or VEILTALLY_SIGNING_SEED_FILE:
           put it there, then restart every instance. Either way the stored fingerprint of
           the seed follows the new one, so an instance left on the old seed will not start.
key list   lists every signing key with its id and fingerprint.`;

export const keyCommand: Command = {
  name: 'key',
  usage,
  async run(args, io) {
    const [action, ...rest] = args;
    if (action !== 'add' && action !== 'list') throw new InvalidInput('say "key add" or "key list"; run `veiltally key --help`');
    const flags = parseFlags(`key ${action}`, rest, action === 'add' ? { print: 'flag' } : {});
    const config = loadConfig();
    const db = openConfiguredDatabase(config);
    try {
      await migrateLatest(db.knex);
      if (action === 'list') {
        for (const k of await listSigningKeys(db.knex)) {
          io.stdout(`${k.keyId}  ${keyFingerprint(k.publicKey)}  since ${k.addedAt.toISOString().slice(0, 16)}Z\n`);
        }
        return 0;
      }
      if (!flags.print && config.signingSeedHex !== undefined) {
        throw new InvalidInput(
          'the signing seed is given by VEILTALLY_SIGNING_SEED (or its _FILE): run `veiltally key add --print`, put the printed seed there on every instance, and restart them',
        );
      }
      const seed = crypto.randomBytes(32);
      const key = await registerSigningKey(db.knex, seed, new Date());
      await replaceSigningSeedFingerprint(db.knex, seed);
      if (flags.print) {
        io.stdout(`${seed.toString('hex')}\n`);
      } else {
        const dir = path.join(config.dataDir, 'secrets');
        fs.mkdirSync(dir, { recursive: true, mode: 0o700 });
        const file = path.join(dir, SIGNING_SEED_FILE);
        const tmp = `${file}.new`;
        fs.writeFileSync(tmp, seed.toString('hex') + '\n', { mode: 0o600 });
        fs.renameSync(tmp, file);
      }
      seed.fill(0);
      io.stderr(
        `added signing key ${key.keyId}, fingerprint ${keyFingerprint(key.publicKey)}\n` +
          'restart the server (every instance) to sign new statements with it.\n',
      );
      return 0;
    } finally {
      await db.close();
    }
  },
};
