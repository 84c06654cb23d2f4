import pg from 'pg';
import { createKnex, migrateLatest } from '../server/db/knex';

/** Creates the database named in `url` when missing (fresh: dropped first). Needs a URL to a maintenance database. */
export async function ensureDatabase(url: string, adminUrl: string, options: { fresh?: boolean } = {}): Promise<void> {
  const name = decodeURIComponent(new URL(url).pathname.replace(/^\//, ''));
  if (!/^[A-Za-z0-9_]+$/.test(name)) throw new Error(`unexpected database name ${name}`);
  const client = new pg.Client({ connectionString: adminUrl || url.replace(/\/[^/]+$/, '/postgres') });
  await client.connect();
  try {
    if (options.fresh) await client.query(`DROP DATABASE IF EXISTS "${name}" WITH (FORCE)`);
    const exists = await client.query('SELECT 1 FROM pg_database WHERE datname = $1', [name]);
    if (!exists.rowCount) await client.query(`CREATE DATABASE "${name}"`);
  } finally {
    await client.end();
  }
}

export async function migrate(url: string): Promise<void> {
  const knex = createKnex(url, { max: 2 });
  try {
    await migrateLatest(knex);
  } finally {
    await knex.destroy();
  }
}
