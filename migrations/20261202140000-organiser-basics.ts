import type { Knex } from 'knex';

/**
 * The organiser basics:
 *  - elections.contact: how members reach the organiser, shown on the member pages that can
 *    leave them stuck (a code already used, voting closed). Free text, optional.
 *  - election_organisers: elections shared with other organisers; the owner stays in
 *    elections.owner_id, the others are listed here and may run the election the same way.
 *  - organisers.removed_at: a removed organiser can no longer sign in; the row stays, so the
 *    audit record keeps naming who did what.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('elections', (t) => {
    t.text('contact').notNullable().defaultTo('');
  });
  await knex.schema.createTable('election_organisers', (t) => {
    t.uuid('election_id').notNullable().references('elections.id').onDelete('CASCADE');
    t.uuid('organiser_id').notNullable().references('organisers.id');
    t.uuid('added_by').nullable().references('organisers.id');
    t.timestamp('added_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.primary(['election_id', 'organiser_id']);
    t.index(['organiser_id']);
  });
  await knex.schema.alterTable('organisers', (t) => {
    t.timestamp('removed_at', { useTz: true }).nullable();
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('organisers', (t) => {
    t.dropColumn('removed_at');
  });
  await knex.schema.dropTableIfExists('election_organisers');
  await knex.schema.alterTable('elections', (t) => {
    t.dropColumn('contact');
  });
}
