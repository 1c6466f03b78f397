import type { Knex } from 'knex';

/**
 * The opt-in live turnout (src/mechanism/liveTurnout.ts):
 *  - elections.live_turnout_epsilon / live_turnout_interval_hours: its own ε (exact decimal text)
 *    and the release interval, both null when it is off;
 *  - live_turnout_releases: one noisy turnout per scheduled release, the only figures shown;
 *  - live_turnout_marks: the exact turnout at the few past releases a later tree node still starts
 *    from, deleted as soon as no node needs it and all of them after the last release.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('elections', (t) => {
    t.string('live_turnout_epsilon', 16).nullable();
    t.integer('live_turnout_interval_hours').nullable();
  });
  await knex.schema.createTable('live_turnout_releases', (t) => {
    t.uuid('election_id').notNullable().references('elections.id');
    t.integer('step').notNullable();
    t.timestamp('due_at', { useTz: true }).notNullable();
    t.integer('released').notNullable();
    t.primary(['election_id', 'step']);
  });
  await knex.schema.createTable('live_turnout_marks', (t) => {
    t.uuid('election_id').notNullable().references('elections.id');
    t.integer('at').notNullable();
    t.integer('exact').notNullable();
    t.integer('released').notNullable();
    t.primary(['election_id', 'at']);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('live_turnout_marks');
  await knex.schema.dropTable('live_turnout_releases');
  await knex.schema.alterTable('elections', (t) => {
    t.dropColumn('live_turnout_epsilon');
    t.dropColumn('live_turnout_interval_hours');
  });
}
