import { loadConfig } from '../config.ts';
import { openConfiguredDatabase } from '../db/configured.ts';
import { migrateLatest } from '../db/migrate.ts';
import type { Command } from './io.ts';

export const migrateCommand: Command = {
  name: 'migrate',
  usage: 'Usage: veiltally migrate\n\nApplies every pending migration and lists what it applied.',
  async run(args, io) {
    if (args.length > 0) {
      io.stderr(`veiltally migrate: unexpected argument "${args[0]}"\n`);
      return 2;
    }
    const db = openConfiguredDatabase(loadConfig());
    try {
      const applied = await migrateLatest(db.knex);
      io.stdout(applied.length ? `applied ${applied.join(', ')}\n` : 'database is up to date\n');
      return 0;
    } finally {
      await db.close();
    }
  },
};
