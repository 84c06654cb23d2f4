import type { Knex } from 'knex';
import { upsertUser } from '../services/authService';
import { DEMO_USERS } from './users';
import { seedDemoAssetLists } from './assetLists';
import { seedDemoPortfolios } from './portfolios';
import { seedDemoReturns } from './returns';
import { seedDemoModels } from './models';
import { join } from 'node:path';
import { paths } from '../config';

/**
 * Seeds the invented demo (users, then each feature's demo data) into an empty database.
 * Each step is a function of its own so features add theirs here.
 */
export async function seedDemo(knex: Knex, log: (message: string) => void = console.log): Promise<void> {
  for (const user of DEMO_USERS) await upsertUser(user);
  log(`[seed] ${DEMO_USERS.length} demo users`);
  void knex;
  // Return series and asset metadata through the import service (the path uploads take).
  await seedDemoReturns(knex, process.env.LOADLINE_DATA_DIR ?? join(paths.repoRoot, '.data'), log);
  // Approved demo models (fitted directly by the engine, approved by the second demo analyst).
  await seedDemoModels(knex, log);
  // Portfolios are built from the demo assets: keep this step after the import (and model) steps.
  await seedDemoPortfolios(knex, log);
  // Saved asset lists name demo assets and a demo fund.
  await seedDemoAssetLists(knex, log);
}

/** True when nothing has been stored yet (no users): the only time the demo is seeded. */
export async function databaseIsEmpty(knex: Knex): Promise<boolean> {
  const row = await knex('users').count<{ count: number }[]>({ count: '*' }).first();
  return Number(row?.count ?? 0) === 0;
}
