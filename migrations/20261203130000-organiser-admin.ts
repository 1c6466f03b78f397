import type { Knex } from 'knex';

/**
 * Administrators: organisers whom the operator lets add and remove organiser accounts. Set only
 * from the command line (`veiltally organiser promote|demote --email …`), never from the web.
 * The organiser created by the first run (named in instance_settings 'first-organiser') becomes
 * one, as on a new site; nobody else does.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('organisers', (t) => {
    t.boolean('admin').notNullable().defaultTo(false);
  });
  const row = (await knex('instance_settings').where({ name: 'first-organiser' }).first('value')) as { value: unknown } | undefined;
  const value = typeof row?.value === 'string' ? (JSON.parse(row.value) as unknown) : row?.value;
  const id = (value as { organiserId?: unknown } | undefined)?.organiserId;
  if (typeof id === 'string') await knex('organisers').where({ id, demo: false }).whereNull('removed_at').update({ admin: true });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('organisers', (t) => {
    t.dropColumn('admin');
  });
}
