import type { Knex } from 'knex';

/**
 * A receipt is handed to the member who cast the ballot. A copy of its hash in the ballot
 * row let anyone who later saw that receipt (with the database, pepper and passphrase) pick
 * out and open that member's ballot. Receipts prove inclusion only, so they live in
 * `receipts` alone and the ballot row keeps just its random id, election and ciphertext.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('ballots', (t) => {
    t.dropUnique(['election_id', 'receipt_hash']);
    t.dropColumn('receipt_hash');
  });
}

/** The column comes back empty: the links it held are deliberately not recoverable. */
export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('ballots', (t) => {
    t.binary('receipt_hash').nullable();
  });
}
