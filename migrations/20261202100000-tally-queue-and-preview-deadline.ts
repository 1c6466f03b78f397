import type { Knex } from 'knex';

/**
 * The tally runs off the request path, and every draw is published.
 *  - tally_started_at / tally_claim: a queued tally, claimed by one process; a claim older than the
 *    stale limit is abandoned (the process died) and the election is simply closed again, since
 *    the draw commits atomically with the result.
 *  - tally_failure: why the last queued tally stopped (an error code, never a count).
 *  - result_visible_at: the whole minute from which the drawn result is shown, so neither the
 *    organiser nor the public learns how long the count took (its duration depends on turnout).
 *  - publish_due_at: the end of the organiser's preview; the housekeeping job publishes then.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('elections', (t) => {
    t.timestamp('tally_started_at', { useTz: true }).nullable();
    t.uuid('tally_claim').nullable();
    t.string('tally_failure', 64).nullable();
    t.timestamp('result_visible_at', { useTz: true }).nullable();
    t.timestamp('publish_due_at', { useTz: true }).nullable();
  });
  // A result drawn before this migration had no deadline: it gets the longest one from now.
  await knex('elections')
    .where({ state: 'tallied' })
    .update({ result_visible_at: knex.raw('tallied_at'), publish_due_at: knex.raw("now() + interval '48 hours'") });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('elections', (t) => {
    t.dropColumn('tally_started_at');
    t.dropColumn('tally_claim');
    t.dropColumn('tally_failure');
    t.dropColumn('result_visible_at');
    t.dropColumn('publish_due_at');
  });
}
