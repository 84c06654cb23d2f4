import type { Knex } from 'knex';

/**
 * Portfolios and their holdings.
 *
 * A portfolio is a fund or a benchmark. Weights are stored normalised (fractions of the portfolio's value summing
 * to one); when the holdings were entered as market values those are kept beside the weights.
 * Access (enforced in server/services/portfoliosService.ts): a PM reads and edits only their own portfolios and may
 * read benchmark portfolios (to choose one); analysts and compliance read all; admins read and edit all.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('portfolios', (t) => {
    t.increments('id').primary();
    t.text('name').notNullable();
    t.text('kind').notNullable().defaultTo('fund'); // fund | benchmark
    t.integer('owner_id').notNullable().references('users.id');
    t.integer('benchmark_portfolio_id').references('portfolios.id').onDelete('SET NULL');
    t.text('description').notNullable().defaultTo('');
    t.specificType('base_currency', 'char(3)').notNullable().defaultTo('USD');
    t.text('input_mode').notNullable().defaultTo('weights'); // how the holdings were last entered: weights | market-values
    t.timestamps(true, true);
    t.index(['owner_id']);
  });
  await knex.raw(`
    ALTER TABLE portfolios ADD CONSTRAINT portfolios_kind_check CHECK (kind IN ('fund','benchmark'));
    ALTER TABLE portfolios ADD CONSTRAINT portfolios_input_mode_check CHECK (input_mode IN ('weights','market-values'));
    ALTER TABLE portfolios ADD CONSTRAINT portfolios_currency_check CHECK (base_currency ~ '^[A-Z]{3}$');
    ALTER TABLE portfolios ADD CONSTRAINT portfolios_not_own_benchmark CHECK (benchmark_portfolio_id IS NULL OR benchmark_portfolio_id <> id);
    CREATE UNIQUE INDEX portfolios_owner_name_unique ON portfolios (owner_id, lower(name));
  `);

  await knex.schema.createTable('portfolio_holdings', (t) => {
    t.increments('id').primary();
    t.integer('portfolio_id').notNullable().references('portfolios.id').onDelete('CASCADE');
    t.integer('asset_id').notNullable().references('assets.id').onDelete('RESTRICT');
    t.integer('position').notNullable(); // row order as entered
    t.double('weight').notNullable(); // normalised: the portfolio's weights sum to 1
    t.double('market_value'); // as entered, when entered as market values (base currency)
    t.unique(['portfolio_id', 'asset_id']);
    t.index(['asset_id']);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('portfolio_holdings');
  await knex.schema.dropTable('portfolios');
}
