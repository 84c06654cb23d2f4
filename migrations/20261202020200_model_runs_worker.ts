import type { Knex } from 'knex';

/** Which worker process ran (or is running) a fit: host and process id, for operators and for load-sharing checks. */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('model_runs', (t) => {
    t.text('worker');
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('model_runs', (t) => {
    t.dropColumn('worker');
  });
}
