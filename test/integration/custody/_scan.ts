import type { TestDatabase } from '../../helpers/databases.ts';

/**
 * Every row of every table in the current schema, one row per line, as PostgreSQL's own
 * text form of the row (bytea appears as \x-hex, jsonb as JSON text). Tables are listed
 * from information_schema, so a table added later is scanned too.
 */
export async function allRowsAsText(db: TestDatabase): Promise<string> {
  const tables = await db
    .knex('information_schema.tables')
    .whereRaw('table_schema = current_schema()')
    .andWhere('table_type', 'BASE TABLE')
    .pluck('table_name');
  if (tables.length < 9) throw new Error(`expected the whole schema, found only ${tables.length} tables`);
  const lines: string[] = [];
  for (const table of tables as string[]) {
    // ROW(alias.*) rather than the bare alias: a bare name would resolve to a column of that name first.
    const rows = await db.knex.raw('SELECT CAST(ROW(scan_row.*) AS text) AS line FROM ?? AS scan_row', [table]);
    for (const r of rows.rows as Array<{ line: string }>) lines.push(`${table}: ${r.line}`);
  }
  return lines.join('\n');
}
