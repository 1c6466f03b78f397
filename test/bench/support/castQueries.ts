/**
 * The database statements one cast sends, once the election has had its first cast in this process (the final POST only, as a member's browser sends it),
 * counted with knex's query event on an in-process app. `node --import tsx test/bench/support/castQueries.ts`
 * lists them (TEST_DATABASE_URL for PostgreSQL); the intake benchmark reports the count.
 */
import http from 'node:http';
import { pathToFileURL } from 'node:url';
import type { Engine } from '../../../src/db/knex.ts';
import { freshDatabase } from '../../helpers/databases.ts';
import { testContext } from '../../helpers/context.ts';
import { testApp } from '../../helpers/app.ts';
import { createOrganiser, openElectionFixture } from '../../helpers/fixtures.ts';
import { castAll, prepareCasts } from './voters.ts';

export async function castStatements(engine: Engine): Promise<string[]> {
  const db = await freshDatabase(engine);
  const ctx = testContext(db);
  const server = http.createServer(testApp(ctx));
  await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
  try {
    const f = await openElectionFixture(ctx, await createOrganiser(ctx), { codes: 2 });
    const a = server.address();
    const url = `http://127.0.0.1:${typeof a === 'object' && a ? a.port : 0}`;
    const [first, probe] = await prepareCasts(url, f.id, f.codes, () => [1]);
    // The election's first cast in a process takes the checked path; the probe is the steady state.
    if ((await castAll(url, [first!], 1)).errors) throw new Error('the first cast failed');
    const queries: string[] = [];
    db.knex.on('query', (q: { sql: string }) => queries.push(q.sql));
    const r = await castAll(url, [probe!], 1);
    if (r.errors) throw new Error('the probe cast failed');
    return queries;
  } finally {
    server.close();
    await db.dispose();
  }
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  const queries = await castStatements(process.env.TEST_DATABASE_URL ? 'postgres' : 'pglite');
  console.log(`${queries.length} statements per cast:`);
  for (const q of queries) console.log(`  ${q.slice(0, 150)}`);
}
