import type { Knex } from 'knex';

/**
 * A queued tally belongs to the process that claimed it, so a retry after that process died
 * starts again at once instead of waiting for the claim to grow old.
 *  - tally_boot_id / tally_pid / tally_host: the claiming process (a random id drawn at its start,
 *    its pid and host name). A claim by a process that no longer exists is abandoned.
 *  - tally_heartbeat_at: refreshed every few seconds while the tally runs; a claim whose heartbeat
 *    stopped (another host, or an older version) is abandoned after a short stale limit.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('elections', (t) => {
    t.uuid('tally_boot_id').nullable();
    t.integer('tally_pid').nullable();
    t.string('tally_host', 255).nullable();
    t.timestamp('tally_heartbeat_at', { useTz: true }).nullable();
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('elections', (t) => {
    t.dropColumn('tally_boot_id');
    t.dropColumn('tally_pid');
    t.dropColumn('tally_host');
    t.dropColumn('tally_heartbeat_at');
  });
}
