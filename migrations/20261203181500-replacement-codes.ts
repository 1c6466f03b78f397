import type { Knex } from 'knex';

/**
 * Replacement codes for a roster member who lost theirs (DEVELOPERS.md, "Replacement codes").
 *
 * - replacement_grants: one row per member of an election who was granted a replacement, under
 *   the keyed hash of their canonical address (custody/keyedHash.ts, memberHash), never the
 *   address and never a code. The primary key is the cap (one replacement per member per
 *   election): the grant is one INSERT … ON CONFLICT DO NOTHING, atomic in the database, so it
 *   holds across every instance sharing it. The draw reads the number of rows into the statement
 *   and deletes them in its own transaction.
 * - mailings.kind gains 'replacement': one such mailing per election (a partial unique index), with
 *   one delivery per granted member, sent by the same durable path as the invitation (the code's
 *   hash waits in pending_codes until the SMTP server accepts the message).
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('replacement_grants', (t) => {
    t.uuid('election_id').notNullable().references('elections.id').onDelete('CASCADE');
    t.binary('member_hash').notNullable();
    t.primary(['election_id', 'member_hash']);
  });
  await knex.raw('ALTER TABLE mailings DROP CONSTRAINT mailings_kind');
  await knex.raw(`ALTER TABLE mailings ADD CONSTRAINT mailings_kind CHECK (kind IN ('invitation', 'opens', 'closing', 'published', 'replacement'))`);
  await knex.raw(`CREATE UNIQUE INDEX mailings_one_replacement ON mailings (election_id) WHERE kind = 'replacement'`);
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw('DROP INDEX IF EXISTS mailings_one_replacement');
  await knex('mailings').where({ kind: 'replacement' }).delete();
  await knex.raw('ALTER TABLE mailings DROP CONSTRAINT mailings_kind');
  await knex.raw(`ALTER TABLE mailings ADD CONSTRAINT mailings_kind CHECK (kind IN ('invitation', 'opens', 'closing', 'published'))`);
  await knex.schema.dropTableIfExists('replacement_grants');
}
