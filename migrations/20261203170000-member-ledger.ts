import type { Knex } from 'knex';

/**
 * The privacy ledger per member, for elections whose electorate is a roster.
 *
 * - ledger_electorates: who an election's draw is charged to, fixed when it opens: one row per
 *   member, holding only the keyed hash of the member's canonical address (custody/keyedHash.ts,
 *   memberHash), never the address. A member's spending is the sum of the privacy_ledger charges
 *   of the elections whose electorate holds their hash, so a renamed, copied or deleted roster with
 *   the same people carries their spending. Append-only, like the ledger.
 * - privacy_ledger.group_id becomes optional: a roster election's charge belongs to its members,
 *   not to a member group. Printed-code elections keep their (per-organiser) group.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('ledger_electorates', (t) => {
    t.uuid('election_id').notNullable().references('elections.id');
    t.binary('member_hash').notNullable();
    t.primary(['election_id', 'member_hash']);
    t.index(['member_hash']);
  });
  await knex.raw(
    `CREATE TRIGGER ledger_electorates_append_only BEFORE UPDATE OR DELETE ON ledger_electorates
       FOR EACH ROW EXECUTE FUNCTION veiltally_append_only()`,
  );
  await knex.raw('ALTER TABLE privacy_ledger ALTER COLUMN group_id DROP NOT NULL');
}

export async function down(knex: Knex): Promise<void> {
  // Charges of roster elections have no group: they cannot be kept under the old schema.
  await knex.raw('ALTER TABLE privacy_ledger DISABLE TRIGGER privacy_ledger_append_only');
  await knex('privacy_ledger').whereNull('group_id').delete();
  await knex.raw('ALTER TABLE privacy_ledger ENABLE TRIGGER privacy_ledger_append_only');
  await knex.raw('ALTER TABLE privacy_ledger ALTER COLUMN group_id SET NOT NULL');
  await knex.schema.dropTableIfExists('ledger_electorates');
}
