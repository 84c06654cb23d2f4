import type { Knex } from 'knex';

/**
 * Return series: assets, their observations, the single stored dataset's settings, import batches and revisions.
 *
 * Loadline keeps ONE dataset of return series (row id 1 in `datasets`): one frequency (daily, weekly or monthly,
 * fixed by the first committed import) and simple returns as the stored kind (log returns and prices are converted
 * on import), so every series a model reads is comparable.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('datasets', (t) => {
    t.increments('id').primary();
    t.text('name').notNullable().unique();
    t.text('frequency'); // null until the first committed import
    t.text('return_kind').notNullable().defaultTo('simple');
    t.timestamps(true, true);
  });
  await knex.raw(`ALTER TABLE datasets ADD CONSTRAINT datasets_frequency_check CHECK (frequency IN ('daily','weekly','monthly'))`);
  await knex.raw(`ALTER TABLE datasets ADD CONSTRAINT datasets_kind_check CHECK (return_kind IN ('simple'))`);
  await knex('datasets').insert({ id: 1, name: 'default' });

  await knex.schema.createTable('assets', (t) => {
    t.increments('id').primary();
    t.text('symbol').notNullable().unique();
    t.text('name').notNullable();
    t.text('sector');
    t.text('country');
    t.text('currency');
    t.text('asset_class');
    t.timestamps(true, true);
  });

  await knex.schema.createTable('import_batches', (t) => {
    t.increments('id').primary();
    t.uuid('ref').notNullable().unique(); // names the kept upload and the problems file
    t.integer('user_id').references('users.id').onDelete('SET NULL');
    t.text('user_email');
    t.text('kind').notNullable().defaultTo('returns'); // 'returns' | 'asset-metadata'
    t.text('file_name').notNullable();
    t.bigInteger('file_size').notNullable();
    t.text('sha256').notNullable();
    t.jsonb('options').notNullable().defaultTo('{}');
    t.text('status').notNullable(); // previewed | committed | rejected | failed
    t.text('frequency');
    t.integer('rows_read').notNullable().defaultTo(0);
    t.integer('inserted').notNullable().defaultTo(0);
    t.integer('replaced').notNullable().defaultTo(0);
    t.integer('skipped').notNullable().defaultTo(0);
    t.integer('rejected').notNullable().defaultTo(0);
    t.integer('assets_created').notNullable().defaultTo(0);
    t.integer('problem_count').notNullable().defaultTo(0);
    t.integer('warning_count').notNullable().defaultTo(0);
    t.jsonb('problems').notNullable().defaultTo('[]'); // the first 100; the full list is a CSV file by ref
    t.jsonb('summary').notNullable().defaultTo('{}'); // assets found, date range, delimiter …
    t.integer('duration_ms');
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp('committed_at', { useTz: true });
    t.index(['sha256']);
    t.index(['created_at']);
  });
  await knex.raw(`ALTER TABLE import_batches ADD CONSTRAINT import_batches_status_check CHECK (status IN ('previewed','committed','rejected','failed'))`);

  await knex.schema.createTable('return_observations', (t) => {
    t.integer('asset_id').notNullable().references('assets.id').onDelete('CASCADE');
    t.date('date').notNullable();
    t.double('value').notNullable();
    t.primary(['asset_id', 'date']);
  });
  // Reading a window of dates for a set of assets: the primary key serves asset-first reads; this one date-first.
  await knex.raw('CREATE INDEX return_observations_date_asset ON return_observations (date, asset_id)');

  await knex.schema.createTable('observation_revisions', (t) => {
    t.bigIncrements('id').primary();
    t.integer('batch_id').notNullable().references('import_batches.id').onDelete('CASCADE');
    t.integer('asset_id').notNullable().references('assets.id').onDelete('CASCADE');
    t.date('date').notNullable();
    t.double('old_value').notNullable();
    t.double('new_value').notNullable();
    t.index(['batch_id']);
    t.index(['asset_id', 'date']);
  });

  // Which batch last wrote each asset (the data-quality view's "last import").
  await knex.schema.alterTable('assets', (t) => {
    t.integer('last_batch_id').references('import_batches.id').onDelete('SET NULL');
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('observation_revisions');
  await knex.schema.dropTable('return_observations');
  await knex.schema.alterTable('assets', (t) => t.dropColumn('last_batch_id'));
  await knex.schema.dropTable('import_batches');
  await knex.schema.dropTable('assets');
  await knex.schema.dropTable('datasets');
}
