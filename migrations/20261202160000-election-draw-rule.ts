import type { Knex } from 'knex';

/**
 * The draw rule each election adopts before voting: the exponential mechanism (the default,
 * and what every existing election used) or permute-and-flip (McKenna & Sheldon 2020).
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('elections', (t) => {
    t.text('draw_rule').notNullable().defaultTo('exponential');
  });
  await knex.raw(
    `ALTER TABLE elections ADD CONSTRAINT elections_draw_rule_check
       CHECK (draw_rule IN ('exponential','permute-and-flip'))`,
  );
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw('ALTER TABLE elections DROP CONSTRAINT IF EXISTS elections_draw_rule_check');
  await knex.schema.alterTable('elections', (t) => {
    t.dropColumn('draw_rule');
  });
}
