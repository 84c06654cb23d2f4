import type { Knex } from 'knex';

/**
 * Saved asset lists: a named set of assets an analyst keeps to use as a model run's universe
 * (universe { kind: 'list', listId }).
 *
 * Members are a join table (not a symbols array) so every member is a real asset (foreign key) and a symbol that
 * is renamed later still points at the same asset. A list is immutable once created (create and delete only), so
 * a run's universe means the same assets whenever the worker reads it. Names are unique per owner, ignoring case.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('asset_lists', (t) => {
    t.increments('id').primary();
    t.text('name').notNullable();
    t.integer('owner_id').notNullable().references('users.id');
    t.text('description').notNullable().defaultTo('');
    t.timestamps(true, true);
    t.index(['owner_id']);
  });
  await knex.raw(`CREATE UNIQUE INDEX asset_lists_owner_name_unique ON asset_lists (owner_id, lower(name))`);

  await knex.schema.createTable('asset_list_members', (t) => {
    t.integer('list_id').notNullable().references('asset_lists.id').onDelete('CASCADE');
    t.integer('asset_id').notNullable().references('assets.id').onDelete('RESTRICT');
    t.integer('position').notNullable(); // order as entered
    t.primary(['list_id', 'asset_id']);
    t.index(['asset_id']);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('asset_list_members');
  await knex.schema.dropTable('asset_lists');
}
