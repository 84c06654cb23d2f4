import { afterAll, describe, expect, it } from 'vitest';
import pg from 'pg';
import type { Knex } from 'knex';
import { loadConfig } from '../../server/config';
import { bindModels, createKnex } from '../../server/db/knex';
import { completeDemo } from '../../server/demo/seed';
import { DEMO_USERS } from '../../server/demo/users';
import { upsertUser } from '../../server/services/authService';
import { ensureDatabase } from '../../scripts/database';
import { readdirSync } from 'node:fs';
import { join } from 'node:path';
import { paths } from '../../server/config';
import { unique } from '../helpers/app';

/**
 * The demo is seeded part by part into a demo database (every account a demo account), so one made by an earlier
 * version (users only) is completed on the next start, and a database where anyone else has an account is never
 * touched. Each case gets a database of its own on the same server (made here, dropped afterwards).
 */
const config = loadConfig();
const made: { name: string; knex: Knex }[] = [];

async function freshDatabase(): Promise<Knex> {
  const name = unique('loadline_seedtest_').toLowerCase();
  const url = config.databaseUrl.replace(/\/[^/?]+(\?.*)?$/, `/${name}$1`);
  await ensureDatabase(url, '', { fresh: true });
  const knex = createKnex(url, { max: 4 });
  // The project's migrations, loaded through vitest's own import (knex's loader cannot read TypeScript here).
  const files = readdirSync(paths.migrations).filter((f) => f.endsWith('.ts')).sort();
  await knex.migrate.latest({
    migrationSource: {
      getMigrations: async () => files,
      getMigrationName: (file: string) => file,
      getMigration: (file: string) => import(/* @vite-ignore */ join(paths.migrations, file)),
    },
  });
  bindModels(knex); // the services the demo uses go through the bound models
  made.push({ name, knex });
  return knex;
}

afterAll(async () => {
  const admin = new pg.Client({ connectionString: config.databaseUrl.replace(/\/[^/?]+(\?.*)?$/, '/postgres$1') });
  await admin.connect();
  try {
    for (const { name, knex } of made) {
      await knex.destroy();
      await admin.query(`DROP DATABASE IF EXISTS "${name}" WITH (FORCE)`);
    }
  } finally {
    await admin.end();
  }
}, 60_000);

const count = async (q: Knex.QueryBuilder) => Number((await q.count<{ n: number }[]>({ n: '*' }).first())?.n);

describe('demo seeding', () => {
  it('completes a demo database that has only its users, once', async () => {
    const knex = await freshDatabase();
    for (const user of DEMO_USERS) await upsertUser(user);
    const log: string[] = [];
    expect(await completeDemo(knex, (m) => log.push(m))).toEqual(['returns', 'models', 'portfolios', 'asset lists']);
    expect(await count(knex('assets'))).toBe(300);
    expect(await count(knex('model_runs').where({ lifecycle: 'approved' }).whereRaw(`parameters->>'label' = 'demo'`))).toBe(2);
    expect(await count(knex('portfolios'))).toBe(4);
    expect(await count(knex('asset_lists'))).toBe(2);
    expect(await completeDemo(knex, (m) => log.push(m))).toEqual([]); // nothing twice
    expect(await count(knex('assets'))).toBe(300);
  }, 180_000);

  it('leaves a database alone once anyone but the demo accounts has an account', async () => {
    const knex = await freshDatabase();
    await upsertUser({ email: 'first.admin@firm.example', name: 'First admin', role: 'admin', password: `pw-${unique()}` });
    expect(await completeDemo(knex, () => undefined)).toEqual([]);
    expect(await count(knex('users'))).toBe(1);
    expect(await count(knex('assets'))).toBe(0);
  }, 60_000);
});
