import type { Knex } from 'knex';

/**
 * Mail to a roster's members: the invitation that carries each member's ballot code, and the
 * notices the organiser schedules (voting opens, N hours before closing, result published).
 *
 * - mailings: one per message sent to the whole roster. kind 'invitation' is made when the
 *   election opens; the others are scheduled by the organiser and expanded when due.
 *   state 'scheduled' (not yet due), 'started' (expanded into deliveries), 'cancelled'.
 * - mail_deliveries: one row per member of a started mailing: queued, sending (in the sender's
 *   hands), sent, or failed with the SMTP server's answer. Never a code, never a code's hash.
 * - pending_codes: the keyed hashes of codes made for invitations in flight, not yet spendable.
 *   A hash moves into ballot_codes, in the transaction that marks its invitations sent, only after
 *   the SMTP server accepted the message; whatever is left here when a sending round starts is
 *   from a round that died and is deleted (its members are queued again and get a fresh code).
 *   The table names no member and no delivery: nothing pairs an address with a hash.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('mailings', (t) => {
    t.uuid('id').primary();
    t.uuid('election_id').notNullable().references('elections.id').onDelete('CASCADE');
    t.text('kind').notNullable();
    t.integer('hours_before').nullable();
    t.text('state').notNullable();
    t.timestamp('created_at', { useTz: true }).notNullable();
    t.timestamp('started_at', { useTz: true }).nullable();
    t.index(['election_id']);
    t.index(['state']);
  });
  await knex.raw(`ALTER TABLE mailings ADD CONSTRAINT mailings_kind CHECK (kind IN ('invitation', 'opens', 'closing', 'published'))`);
  await knex.raw(`ALTER TABLE mailings ADD CONSTRAINT mailings_state CHECK (state IN ('scheduled', 'started', 'cancelled'))`);
  await knex.raw(
    `ALTER TABLE mailings ADD CONSTRAINT mailings_hours CHECK ((kind = 'closing') = (hours_before IS NOT NULL) AND (hours_before IS NULL OR hours_before BETWEEN 1 AND 720))`,
  );
  await knex.schema.createTable('mail_deliveries', (t) => {
    t.uuid('mailing_id').notNullable().references('mailings.id').onDelete('CASCADE');
    t.uuid('member_id').notNullable().references('roster_members.id').onDelete('CASCADE');
    t.text('state').notNullable();
    t.text('answer').nullable();
    t.primary(['mailing_id', 'member_id']);
    t.index(['mailing_id', 'state']);
  });
  await knex.raw(`ALTER TABLE mail_deliveries ADD CONSTRAINT mail_deliveries_state CHECK (state IN ('queued', 'sending', 'sent', 'failed'))`);
  await knex.schema.createTable('pending_codes', (t) => {
    t.uuid('election_id').notNullable().references('elections.id').onDelete('CASCADE');
    t.binary('code_hash').notNullable();
    t.primary(['election_id', 'code_hash']);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists('pending_codes');
  await knex.schema.dropTableIfExists('mail_deliveries');
  await knex.schema.dropTableIfExists('mailings');
}
