import crypto from 'node:crypto';
import type { Knex } from 'knex';
import { makeExponentialDraw } from '../src/mechanism/draw.ts';

/**
 * Signed statements, the instance's public keys, member groups and the privacy ledger.
 *
 * - signing_keys: every Ed25519 public key this instance has signed with, by key id, so old
 *   statements keep verifying after a key is replaced.
 * - statements: one signed statement per election (election_id unique); draw_sequence comes from
 *   one instance-wide sequence, so a second draw for an election would need a new, larger number.
 * - member_groups and privacy_ledger: the ε each draw spent on a group of members, charged in the
 *   draw's transaction.
 * Ledger and statement rows are append-only: a trigger refuses UPDATE and DELETE, so the app
 * (and anyone using its database role without dropping the trigger) can never undo a charge.
 */
const APPEND_ONLY_FN = `
CREATE OR REPLACE FUNCTION veiltally_append_only() RETURNS trigger AS $$
BEGIN
  RAISE EXCEPTION 'rows of % are append-only', TG_TABLE_NAME USING ERRCODE = 'raise_exception';
END;
$$ LANGUAGE plpgsql`;

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('signing_keys', (t) => {
    t.text('key_id').primary();
    t.binary('public_key').notNullable().unique();
    t.timestamp('added_at', { useTz: true }).notNullable();
  });

  await knex.schema.createTable('member_groups', (t) => {
    t.uuid('id').primary();
    t.text('name').notNullable();
    // Compared trimmed and case-insensitively, so "Rowing club" and "rowing club " are one group.
    t.text('name_key').notNullable().unique();
    t.timestamp('created_at', { useTz: true }).notNullable();
  });

  await knex.schema.alterTable('elections', (t) => {
    t.uuid('group_id').nullable().references('member_groups.id');
    t.index(['group_id']);
  });

  await knex.schema.createTable('statements', (t) => {
    t.bigIncrements('draw_sequence').primary();
    t.uuid('election_id').notNullable().unique().references('elections.id');
    t.text('key_id').notNullable().references('signing_keys.key_id');
    // The exact RFC 8785 bytes that were signed, as text, and the signature (base64url).
    t.text('canonical').notNullable();
    t.text('signature').notNullable();
  });

  await knex.schema.createTable('privacy_ledger', (t) => {
    t.bigIncrements('id').primary();
    t.uuid('group_id').notNullable().references('member_groups.id');
    t.uuid('election_id').notNullable().references('elections.id');
    t.text('kind').notNullable(); // 'draw' (later kinds: a private turnout estimate)
    t.timestamp('charged_at', { useTz: true }).notNullable();
    // Exact decimal strings, as the mechanism states them.
    t.text('how_voted_epsilon').notNullable();
    t.text('whether_voted_epsilon').notNullable();
    // Releases with no finite ε: 'anyone-voted', 'exact-turnout'.
    t.jsonb('unprotected').notNullable();
    t.unique(['election_id', 'kind']);
    t.index(['group_id', 'charged_at']);
  });
  await knex.raw(`ALTER TABLE privacy_ledger ADD CONSTRAINT privacy_ledger_kind_check CHECK (kind IN ('draw'))`);

  await knex.raw(APPEND_ONLY_FN);
  for (const table of ['privacy_ledger', 'statements']) {
    await knex.raw(
      `CREATE TRIGGER ${table}_append_only BEFORE UPDATE OR DELETE ON ${table}
         FOR EACH ROW EXECUTE FUNCTION veiltally_append_only()`,
    );
  }

  // Elections made before groups existed join one group, and draws already made are charged to it,
  // so the ledger starts complete.
  const existing = await knex('elections').count<{ n: string | number }[]>({ n: '*' });
  if (Number(existing[0]?.n ?? 0) > 0) {
    const groupId = crypto.randomUUID();
    const now = new Date();
    await knex('member_groups').insert({ id: groupId, name: 'Members', name_key: 'members', created_at: now });
    await knex('elections').update({ group_id: groupId });
    const drawn = await knex('elections').whereNotNull('tallied_at').select('id', 'epsilon', 'neighbour', 'seats', 'tallied_at', 'publish_turnout');
    for (const e of drawn) {
      const options = Number((await knex('options').where({ election_id: e.id }).count<{ n: string | number }[]>({ n: '*' }))[0]?.n);
      const draw = makeExponentialDraw({ epsilon: e.epsilon, options: Math.max(options, e.seats + 1), seats: e.seats, neighbour: e.neighbour });
      await knex('privacy_ledger').insert({
        group_id: groupId,
        election_id: e.id,
        kind: 'draw',
        charged_at: e.tallied_at,
        how_voted_epsilon: draw.privacy.howVoted,
        whether_voted_epsilon: draw.privacy.whetherVoted,
        unprotected: JSON.stringify(e.publish_turnout ? ['anyone-voted', 'exact-turnout'] : ['anyone-voted']),
      });
    }
  }
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists('privacy_ledger');
  await knex.schema.dropTableIfExists('statements');
  await knex.raw('DROP FUNCTION IF EXISTS veiltally_append_only()');
  await knex.schema.alterTable('elections', (t) => {
    t.dropColumn('group_id');
  });
  await knex.schema.dropTableIfExists('member_groups');
  await knex.schema.dropTableIfExists('signing_keys');
}
