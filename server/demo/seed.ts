import type { Knex } from 'knex';
import { upsertUser } from '../services/authService';
import { DEMO_USERS } from './users';
import { seedDemoAssetLists, DEMO_ASSET_LIST_NAMES } from './assetLists';
import { DEMO_PORTFOLIOS, seedDemoPortfolios } from './portfolios';
import { demoAssets, seedDemoReturns } from './returns';
import { DEMO_MODEL_RUNS, seedDemoModels } from './models';
import { join } from 'node:path';
import { paths } from '../config';

type Log = (message: string) => void;

/**
 * The invented demo, part by part. A demo database is one whose every account is a demo account: there each part is
 * seeded when its data is absent, so a database made by an earlier version of Loadline (say, users only) gets what
 * it lacks on the next start. A database where anyone else has an account is never touched; the returns part is
 * seeded only into a database without any assets, so the demo never mixes with someone's own data.
 */
interface DemoPart {
  name: string;
  /** True when the part should be seeded now. */
  wanted(knex: Knex): Promise<boolean>;
  seed(knex: Knex, log: Log): Promise<void>;
}

async function exists(query: Knex.QueryBuilder): Promise<boolean> {
  return Boolean(await query.first(query.client.raw('1 AS present')));
}

async function demoReturnsPresent(knex: Knex): Promise<boolean> {
  const symbols = demoAssets().map((a) => a.symbol);
  return exists(knex('assets as a').whereIn('a.symbol', symbols).whereExists(knex('return_observations as o').select(knex.raw('1')).whereRaw('o.asset_id = a.id')));
}

const DEMO_PARTS: DemoPart[] = [
  {
    name: 'users',
    wanted: async (knex) => Number((await knex('users').whereRaw('lower(email) = ANY(?)', [DEMO_USERS.map((u) => u.email.toLowerCase())]).count<{ n: number }[]>({ n: '*' }).first())?.n) !== DEMO_USERS.length,
    seed: async (knex, log) => {
      const present = new Set(((await knex('users').pluck('email')) as string[]).map((e) => e.toLowerCase()));
      const missing = DEMO_USERS.filter((u) => !present.has(u.email.toLowerCase()));
      for (const user of missing) await upsertUser(user);
      log(`[seed] ${missing.length} demo users`);
    },
  },
  {
    // Return series and asset metadata through the import service (the path uploads take).
    name: 'returns',
    wanted: async (knex) => !(await exists(knex('assets'))),
    seed: (knex, log) => seedDemoReturns(knex, process.env.LOADLINE_DATA_DIR ?? join(paths.repoRoot, '.data'), log),
  },
  {
    // Approved demo models (fitted directly by the engine, approved by the second demo analyst).
    name: 'models',
    wanted: async (knex) => (await demoReturnsPresent(knex)) && !(await exists(knex('model_runs').whereRaw(`parameters->>'label' = ANY(?)`, [DEMO_MODEL_RUNS.map((r) => r.label ?? '')]))),
    seed: (knex, log) => seedDemoModels(knex, log),
  },
  {
    // Portfolios are built from the demo assets: after the returns (and models).
    name: 'portfolios',
    wanted: async (knex) => (await demoReturnsPresent(knex)) && !(await exists(knex('portfolios').whereIn('name', Object.values(DEMO_PORTFOLIOS)))),
    seed: (knex, log) => seedDemoPortfolios(knex, log),
  },
  {
    // Saved asset lists name demo assets and a demo fund.
    name: 'asset lists',
    wanted: async (knex) => (await exists(knex('portfolios').where('name', DEMO_PORTFOLIOS.core))) && !(await exists(knex('asset_lists').whereIn('name', DEMO_ASSET_LIST_NAMES))),
    seed: (knex, log) => seedDemoAssetLists(knex, log),
  },
];

/** True when every account (if any) is a demo account: the only databases the demo is seeded into. */
export async function isDemoDatabase(knex: Knex): Promise<boolean> {
  const demo = DEMO_USERS.map((u) => u.email.toLowerCase());
  return !(await exists(knex('users').whereRaw('NOT (lower(email) = ANY(?))', [demo])));
}

/** Seeds the demo parts a demo database lacks, in order; answers their names (none for any other database). */
export async function completeDemo(knex: Knex, log: Log = console.log): Promise<string[]> {
  if (!(await isDemoDatabase(knex))) return [];
  const seeded: string[] = [];
  for (const part of DEMO_PARTS) {
    if (!(await part.wanted(knex))) continue;
    await part.seed(knex, log);
    seeded.push(part.name);
  }
  return seeded;
}
