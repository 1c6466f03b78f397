import type { Knex } from 'knex';

/**
 * The whole first data model.
 * Ballots and ballot codes deliberately carry no timestamps or sequence numbers,
 * so no column ties a ballot to a code or to the order of arrival.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('organisers', (t) => {
    t.uuid('id').primary();
    t.text('email').notNullable().unique(); // stored lower-cased
    t.text('password_hash').notNullable();
    t.uuid('created_by').nullable().references('organisers.id');
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
  });

  // Session ids are stored only as SHA-256 hashes, so a database read gives no live session.
  await knex.schema.createTable('sessions', (t) => {
    t.text('sid_hash').primary();
    t.jsonb('data').notNullable();
    t.timestamp('expires_at', { useTz: true }).notNullable().index();
  });

  await knex.schema.createTable('elections', (t) => {
    t.uuid('id').primary();
    t.uuid('owner_id').notNullable().references('organisers.id');
    t.text('title').notNullable();
    t.text('description').notNullable().defaultTo('');
    // draft -> open -> closed -> tallied -> published
    t.text('state').notNullable().defaultTo('draft');
    t.integer('seats').notNullable().defaultTo(1);
    t.text('epsilon').notNullable(); // the decimal string as entered, parsed exactly by the mechanism
    t.text('neighbour').notNullable().defaultTo('replace-one'); // or 'add-remove'
    t.timestamp('opens_at', { useTz: true }).notNullable();
    t.timestamp('closes_at', { useTz: true }).notNullable();
    t.text('time_zone').notNullable().defaultTo('UTC'); // IANA name, for display only
    t.boolean('publish_turnout').notNullable().defaultTo(false);
    t.integer('retention_days').nullable(); // null: shred at publication
    t.integer('expected_voters').nullable();
    // Custody: the public key, and the secret key only as wrapped by the tally passphrase.
    t.binary('public_key').nullable();
    t.jsonb('wrapped_key').nullable();
    // The draw is made once; its outcome (winners, statement, signature) is kept here.
    t.jsonb('result').nullable();
    t.integer('ballots_counted').nullable();
    t.timestamp('opened_at', { useTz: true }).nullable();
    t.timestamp('closed_at', { useTz: true }).nullable();
    t.timestamp('tallied_at', { useTz: true }).nullable();
    t.timestamp('published_at', { useTz: true }).nullable();
    t.timestamp('shred_after', { useTz: true }).nullable();
    t.timestamp('shredded_at', { useTz: true }).nullable();
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp('updated_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.index(['owner_id']);
    t.index(['state']);
  });
  await knex.raw(
    `ALTER TABLE elections ADD CONSTRAINT elections_state_check
       CHECK (state IN ('draft','open','closed','tallied','published'))`,
  );
  await knex.raw(
    `ALTER TABLE elections ADD CONSTRAINT elections_neighbour_check
       CHECK (neighbour IN ('replace-one','add-remove'))`,
  );

  await knex.schema.createTable('options', (t) => {
    t.uuid('election_id').notNullable().references('elections.id').onDelete('CASCADE');
    t.integer('position').notNullable(); // 0-based; the ballot bitset uses this index
    t.text('label').notNullable();
    t.text('description').notNullable().defaultTo('');
    t.primary(['election_id', 'position']);
    t.unique(['election_id', 'label']);
  });

  // A code is stored only as HMAC-SHA-256 under the server's pepper.
  await knex.schema.createTable('ballot_codes', (t) => {
    t.uuid('election_id').notNullable().references('elections.id').onDelete('CASCADE');
    t.binary('code_hash').notNullable();
    t.boolean('spent').notNullable().defaultTo(false);
    t.boolean('revoked').notNullable().defaultTo(false);
    t.primary(['election_id', 'code_hash']);
  });

  await knex.schema.createTable('ballots', (t) => {
    t.uuid('id').primary(); // random, so it says nothing about order
    t.uuid('election_id').notNullable().references('elections.id').onDelete('CASCADE');
    t.binary('sealed').notNullable();
    t.binary('receipt_hash').notNullable();
    t.unique(['election_id', 'receipt_hash']);
    t.index(['election_id', 'id']); // keyset pagination during the tally
  });

  // Receipts outlive shredded ballots so members can still check inclusion.
  await knex.schema.createTable('receipts', (t) => {
    t.uuid('election_id').notNullable().references('elections.id').onDelete('CASCADE');
    t.binary('receipt_hash').notNullable();
    t.primary(['election_id', 'receipt_hash']);
  });

  await knex.schema.createTable('audit_events', (t) => {
    t.bigIncrements('id');
    t.uuid('election_id').nullable().references('elections.id').onDelete('CASCADE');
    t.uuid('organiser_id').nullable().references('organisers.id');
    t.text('action').notNullable();
    t.jsonb('detail').notNullable().defaultTo('{}');
    t.boolean('public').notNullable().defaultTo(false);
    t.timestamp('at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.index(['election_id', 'at']);
  });

  // Small instance-wide values shared by every app server on this database.
  await knex.schema.createTable('instance_settings', (t) => {
    t.text('name').primary();
    t.jsonb('value').notNullable();
  });
}

export async function down(knex: Knex): Promise<void> {
  for (const table of [
    'instance_settings',
    'audit_events',
    'receipts',
    'ballots',
    'ballot_codes',
    'options',
    'elections',
    'sessions',
    'organisers',
  ]) {
    await knex.schema.dropTableIfExists(table);
  }
}
