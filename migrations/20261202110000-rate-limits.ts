import type { Knex } from 'knex';

/**
 * Attempt counters shared by every app server on this database (src/web/middleware/limits.ts).
 * The shape is the one rate-limiter-flexible's PostgreSQL store reads and writes; keys are
 * a limit's name and a hash of the address or target, never the address itself.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('rate_limits', (t) => {
    t.string('key', 255).primary();
    t.integer('points').notNullable().defaultTo(0);
    t.bigInteger('expire').nullable().index();
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists('rate_limits');
}
