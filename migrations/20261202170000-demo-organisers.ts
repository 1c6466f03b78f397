import type { Knex } from 'knex';

/**
 * The sample elections (`veiltally demo`, or the first-run page's button) belong to an
 * organiser created only by the demo. The flag marks that login wherever it appears, keeps
 * the first-run page open for the real first organiser, and tells demo elections (owned by a
 * demo organiser) from real ones, so the demo can refuse a database that holds real elections.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('organisers', (t) => {
    t.boolean('demo').notNullable().defaultTo(false);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('organisers', (t) => {
    t.dropColumn('demo');
  });
}
