import type { Knex } from 'knex';

/**
 * A bylaw quorum, optional: the least number of ballots the organisation's rules require. Null when
 * none was set (the default). At the draw the result releases one exact bit, whether the ballots
 * reached it, and the signed statement lists that bit as an unprotected release.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('elections', (t) => {
    t.integer('quorum').nullable();
  });
  await knex.raw('ALTER TABLE elections ADD CONSTRAINT elections_quorum_check CHECK (quorum IS NULL OR quorum >= 1)');
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw('ALTER TABLE elections DROP CONSTRAINT IF EXISTS elections_quorum_check');
  await knex.schema.alterTable('elections', (t) => {
    t.dropColumn('quorum');
  });
}
