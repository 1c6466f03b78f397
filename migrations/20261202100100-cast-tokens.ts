import type { Knex } from 'knex';

/**
 * One row per cast made with a one-time cast token (src/custody/castToken.ts): a keyed hash of
 * the token and the receipt encrypted under a key derived from the token, so a retry of the same
 * submission gets its receipt back. No timestamp, no code, no ballot id. The rows are deleted at
 * the tally's storage rewrite (unlinkStorage.ts), after which they could only link rows.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('cast_tokens', (t) => {
    t.uuid('election_id').notNullable().references('id').inTable('elections').onDelete('CASCADE');
    t.binary('token_hash').notNullable();
    t.binary('sealed_receipt').notNullable();
    t.primary(['election_id', 'token_hash']);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('cast_tokens');
}
