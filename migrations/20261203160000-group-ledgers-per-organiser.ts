import crypto from 'node:crypto';
import type { Knex } from 'knex';

/**
 * Member groups (the ledger of printed-code elections) belong to one organiser. Until now a group
 * was found by its name across the whole instance, so every election left with the default
 * "Members", or two clubs both typing "Rowing club", spent one shared budget.
 *
 * Existing rows are split by owner: a group used by the elections of several organisers stays
 * with the organiser of its earliest election, and every other organiser gets a group of the same
 * name holding their own elections and their own draws' charges. A group no election uses is
 * removed (it has no charges). Names are then unique per organiser, not per instance.
 *
 * The ledger is append-only (a trigger refuses UPDATE); moving a charge to its owner's group is
 * the one change made to it, here, with the trigger off for this transaction only.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('member_groups', (t) => {
    t.uuid('owner_id').nullable().references('organisers.id');
    t.dropUnique(['name_key']);
  });
  await knex.raw('ALTER TABLE privacy_ledger DISABLE TRIGGER privacy_ledger_append_only');
  const groups = await knex('member_groups').select('id', 'name', 'name_key', 'created_at');
  for (const g of groups) {
    const owners = await knex('elections').where({ group_id: g.id }).groupBy('owner_id').orderByRaw('min(created_at), owner_id').select('owner_id');
    if (owners.length === 0) {
      await knex('member_groups').where({ id: g.id }).delete();
      continue;
    }
    await knex('member_groups').where({ id: g.id }).update({ owner_id: owners[0]!.owner_id });
    for (const { owner_id: ownerId } of owners.slice(1)) {
      const id = crypto.randomUUID();
      await knex('member_groups').insert({ id, name: g.name, name_key: g.name_key, created_at: g.created_at, owner_id: ownerId });
      const theirs = knex('elections').where({ group_id: g.id, owner_id: ownerId }).select('id');
      await knex('privacy_ledger').where({ group_id: g.id }).whereIn('election_id', theirs).update({ group_id: id });
      await knex('elections').where({ group_id: g.id, owner_id: ownerId }).update({ group_id: id });
    }
  }
  await knex.raw('ALTER TABLE privacy_ledger ENABLE TRIGGER privacy_ledger_append_only');
  await knex.schema.alterTable('member_groups', (t) => {
    t.unique(['owner_id', 'name_key']);
  });
  await knex.raw('ALTER TABLE member_groups ALTER COLUMN owner_id SET NOT NULL');
}

/** Back to names unique per instance: groups of the same name are merged into the oldest. */
export async function down(knex: Knex): Promise<void> {
  await knex.raw('ALTER TABLE privacy_ledger DISABLE TRIGGER privacy_ledger_append_only');
  const groups = await knex('member_groups')
    .orderBy([{ column: 'created_at' }, { column: 'id' }])
    .select('id', 'name_key');
  const kept = new Map<string, string>();
  for (const g of groups) {
    const into = kept.get(g.name_key);
    if (!into) {
      kept.set(g.name_key, g.id);
      continue;
    }
    await knex('privacy_ledger').where({ group_id: g.id }).update({ group_id: into });
    await knex('elections').where({ group_id: g.id }).update({ group_id: into });
    await knex('member_groups').where({ id: g.id }).delete();
  }
  await knex.raw('ALTER TABLE privacy_ledger ENABLE TRIGGER privacy_ledger_append_only');
  await knex.schema.alterTable('member_groups', (t) => {
    t.dropUnique(['owner_id', 'name_key']);
    t.unique(['name_key']);
    t.dropColumn('owner_id');
  });
}
