/**
 * Demo step: invented funds of Quillfield Asset Management built from the demo assets (seeded before this step by
 * the import demo). Deterministic (seeded weights), a few hundred rows, well under a second. Base currency EUR: the
 * demo assets are European (EUR, GBP, CHF, SEK), so the risk page's exchange-rate note names the non-euro share.
 */
import type { Knex } from 'knex';
import { createRandom } from '../engine/random';

export const DEMO_PORTFOLIOS = {
  benchmark: 'Quillfield Broad Universe',
  core: 'Quillfield Core Equity',
  income: 'Quillfield Income Tilt',
  small: 'Quillfield Harbour Opportunities',
} as const;

interface AssetRow {
  id: number;
  symbol: string;
  sector: string | null;
}

export async function seedDemoPortfolios(knex: Knex, log: (message: string) => void = console.log): Promise<void> {
  const assets = (await knex('assets as a')
    .whereExists(knex('return_observations as o').select(knex.raw('1')).whereRaw('o.asset_id = a.id'))
    .orderBy('a.symbol')
    .select('a.id', 'a.symbol', 'a.sector')) as AssetRow[];
  if (assets.length < 10) {
    log(`[seed] portfolios skipped: only ${assets.length} demo assets with returns`);
    return;
  }
  const users = (await knex('users').whereIn('email', ['pm@quillfield.example', 'pm2@quillfield.example']).select('id', 'email')) as { id: number; email: string }[];
  const pm = users.find((u) => u.email === 'pm@quillfield.example');
  const pm2 = users.find((u) => u.email === 'pm2@quillfield.example');
  if (!pm || !pm2) throw new Error('demo PMs missing: seed users first');
  const rng = createRandom(20261203);

  const insert = async (
    name: string,
    ownerId: number,
    kind: 'fund' | 'benchmark',
    description: string,
    holdings: { asset: AssetRow; value: number }[],
    mode: 'weights' | 'market-values',
    benchmarkId: number | null,
  ): Promise<number> => {
    const [row] = await knex('portfolios')
      .insert({ name, owner_id: ownerId, kind, description, base_currency: 'EUR', input_mode: mode, benchmark_portfolio_id: benchmarkId })
      .returning('id');
    const total = holdings.reduce((s, h) => s + h.value, 0);
    await knex('portfolio_holdings').insert(
      holdings.map((h, position) => ({ portfolio_id: row.id, asset_id: h.asset.id, position, weight: h.value / total, market_value: mode === 'market-values' ? h.value : null })),
    );
    return row.id as number;
  };

  // Benchmark: every demo asset, invented "capitalisation" weights (log-normal), shared reference portfolio.
  const benchmarkId = await insert(
    DEMO_PORTFOLIOS.benchmark,
    pm.id,
    'benchmark',
    'Invented broad reference portfolio over every demo asset (log-normal weights). Shared: every role can read it and choose it as a benchmark.',
    assets.map((asset) => ({ asset, value: Math.exp(0.8 * rng.normal()) })),
    'weights',
    null,
  );
  // Core equity: 40 names, a mild tilt, market values in EUR.
  const pick = (count: number, offset: number, stride: number) => {
    const chosen: AssetRow[] = [];
    for (let k = 0; chosen.length < Math.min(count, assets.length); k++) {
      const a = assets[(offset + k * stride) % assets.length];
      if (!chosen.includes(a)) chosen.push(a);
      if (k > assets.length * 4) break;
    }
    return chosen;
  };
  const core = pick(40, 0, 3);
  const coreId = await insert(
    DEMO_PORTFOLIOS.core,
    pm.id,
    'fund',
    'Invented diversified equity fund, entered as market values.',
    core.map((asset) => ({ asset, value: Math.round(250_000 + 1_500_000 * rng.uniform()) })),
    'market-values',
    benchmarkId,
  );
  // Income tilt: 30 names, weights entered directly.
  const income = pick(30, 1, 5);
  await insert(
    DEMO_PORTFOLIOS.income,
    pm.id,
    'fund',
    'Invented income-oriented fund, entered as weights.',
    income.map((asset) => ({ asset, value: 0.5 + rng.uniform() })),
    'weights',
    benchmarkId,
  );
  // The second PM's fund, concentrated: 15 names.
  const small = pick(15, 2, 7);
  await insert(
    DEMO_PORTFOLIOS.small,
    pm2.id,
    'fund',
    'Invented concentrated fund of the second demo portfolio manager.',
    small.map((asset) => ({ asset, value: 0.3 + rng.uniform() })),
    'weights',
    benchmarkId,
  );
  log(`[seed] 4 demo portfolios (${core.length}, ${income.length}, ${small.length} holdings and a ${assets.length}-asset benchmark); core fund id ${coreId}`);
}
