import knexFactory, { type Knex } from 'knex';
import pg from 'pg';
import { Model } from 'objection';
import { paths } from '../config';

// DATE columns stay ISO strings ('2024-01-31'): pg would otherwise make local-midnight Date objects.
pg.types.setTypeParser(1082, (value: string) => value);
// BIGINT counts fit in a double for everything Loadline stores.
pg.types.setTypeParser(20, (value: string) => Number(value));
// NUMERIC stays a string unless a model converts it; DOUBLE PRECISION is already a number.

export function createKnex(databaseUrl: string, pool: { min?: number; max?: number } = {}): Knex {
  return knexFactory({
    client: 'pg',
    connection: databaseUrl,
    pool: { min: pool.min ?? 0, max: pool.max ?? 10 },
    migrations: { directory: paths.migrations, loadExtensions: ['.ts'], tableName: 'knex_migrations' },
  });
}

/** Binds Objection models to this Knex instance (one database per process). */
export function bindModels(knex: Knex): void {
  Model.knex(knex);
}

export async function migrateLatest(knex: Knex): Promise<void> {
  await knex.migrate.latest();
}
