import type { Config } from '../config.ts';
import { openDatabase, type Database } from './knex.ts';

export function openConfiguredDatabase(config: Config): Database {
  return config.databaseUrl
    ? openDatabase({ engine: 'postgres', url: config.databaseUrl })
    : openDatabase({ engine: 'pglite', dataDir: config.dataDir });
}
