import type { Knex } from 'knex';

/**
 * Members who held a second working code in a roster election (a replacement, migration
 * 20261203181500). Such a member could cast two ballots, so the draw protects them at twice its ε
 * (group privacy) and the per-member ledger charges them twice. The draw moves the election's
 * replacement_grants here in its own transaction before deleting them: one row per holder, the
 * keyed hash of the address only (as ledger_electorates), never an address or a code. Append-only,
 * like the rest of the ledger.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('ledger_second_codes', (t) => {
    t.uuid('election_id').notNullable().references('elections.id');
    t.binary('member_hash').notNullable();
    t.primary(['election_id', 'member_hash']);
  });
  await knex.raw(
    `CREATE TRIGGER ledger_second_codes_append_only BEFORE UPDATE OR DELETE ON ledger_second_codes
       FOR EACH ROW EXECUTE FUNCTION veiltally_append_only()`,
  );
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists('ledger_second_codes');
}
