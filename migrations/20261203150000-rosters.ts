import type { Knex } from 'knex';

/**
 * Member rosters: the addresses of an electorate that votes from home.
 *
 * - rosters: owned by the organiser who made it (owner_id). A roster is never instance-wide.
 * - roster_organisers: organisers the owner shared the roster with. Sharing an election does
 *   not share its roster: the organisers of a roster are its owner plus the ones listed here,
 *   and only they see its addresses or can put it on an election.
 * - roster_members: one row per member. email is kept as entered (for the mail), email_canonical
 *   (trimmed, NFC, lower-cased) is unique per roster, so "Ann@Example.org" and "ann@example.org"
 *   are one member. Deleting a roster deletes its members.
 * - elections.roster_id: the electorate. null means "printed codes" (codes issued by hand); a
 *   roster id means the app sends one code per member. Fixed once the election opens.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('rosters', (t) => {
    t.uuid('id').primary();
    t.uuid('owner_id').notNullable().references('organisers.id');
    t.text('name').notNullable();
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.index(['owner_id']);
  });
  await knex.schema.createTable('roster_organisers', (t) => {
    t.uuid('roster_id').notNullable().references('rosters.id').onDelete('CASCADE');
    t.uuid('organiser_id').notNullable().references('organisers.id');
    t.uuid('added_by').nullable().references('organisers.id');
    t.timestamp('added_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.primary(['roster_id', 'organiser_id']);
    t.index(['organiser_id']);
  });
  await knex.schema.createTable('roster_members', (t) => {
    t.uuid('id').primary();
    t.uuid('roster_id').notNullable().references('rosters.id').onDelete('CASCADE');
    t.text('email').notNullable();
    t.text('email_canonical').notNullable();
    t.text('display_name').nullable();
    t.unique(['roster_id', 'email_canonical']);
  });
  await knex.schema.alterTable('elections', (t) => {
    t.uuid('roster_id').nullable().references('rosters.id');
    t.index(['roster_id']);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('elections', (t) => {
    t.dropColumn('roster_id');
  });
  await knex.schema.dropTableIfExists('roster_members');
  await knex.schema.dropTableIfExists('roster_organisers');
  await knex.schema.dropTableIfExists('rosters');
}
