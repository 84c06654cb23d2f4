/**
 * Test set-up for portfolio risk: stores invented return series as assets and observations, then fits and stores a
 * model run through the product's own path (modelPanel.loadPanel → fitCompute.computeModelRun → insertModelResult),
 * without the queue. Runs stay drafts so they never become "the latest approved model" of other test files.
 */
import type { Knex } from 'knex';
import { loadPanel } from '../../server/services/modelPanel';
import { insertRun } from '../../server/services/modelRunService';
import { insertModelResult, resultOfFit } from '../../server/services/modelStore';
import { computeModelRun } from '../../server/worker/fitCompute';
import { ModelRunParametersSchema, type Estimator } from '../../shared/schemas/modelRuns';
import { demoUser } from './app';

/** Inserts assets (symbols unique per call) and their returns; values[t][i] NaN = missing. */
export async function insertReturnSeries(knex: Knex, symbols: string[], dates: string[], values: number[][], sector = 'Test fixture'): Promise<number[]> {
  const rows = (await knex('assets')
    .insert(symbols.map((symbol) => ({ symbol, name: `Invented ${symbol}`, sector })))
    .returning(['id', 'symbol'])) as { id: number; symbol: string }[];
  const ids = symbols.map((s) => rows.find((r) => r.symbol === s)!.id);
  const observations: { asset_id: number; date: string; value: number }[] = [];
  dates.forEach((date, t) => ids.forEach((id, i) => Number.isFinite(values[t][i]) && observations.push({ asset_id: id, date, value: values[t][i] })));
  for (let k = 0; k < observations.length; k += 5000) await knex('return_observations').insert(observations.slice(k, k + 5000));
  return ids;
}

/** Fits and stores a succeeded draft run over the given symbols and dates; answers its id and label. */
export async function storeFittedRun(knex: Knex, options: { symbols: string[]; from: string; to: string; estimator: Estimator; factors?: number }): Promise<{ id: number; label: string }> {
  const parameters = ModelRunParametersSchema.parse({
    universe: { kind: 'assets', symbols: options.symbols },
    window: { kind: 'dates', from: options.from, to: options.to },
    weighting: { kind: 'equal' },
    mean: 'sample',
    estimator: options.estimator,
    ...(options.estimator === 'fa' || options.estimator === 'ppca' ? { factors: options.factors ?? 3 } : {}),
    missing: 'em',
  });
  const panel = await loadPanel(knex, parameters.universe, parameters.window, parameters.missing);
  const fit = computeModelRun(panel, parameters);
  const analyst = await knex('users').where({ email: demoUser('analyst').email }).first();
  return knex.transaction(async (trx) => {
    const run = await insertRun(trx, parameters, { id: analyst.id, email: analyst.email }, null);
    await trx('model_runs').where({ id: run.id }).update({ status: 'succeeded', finished_at: trx.fn.now(), progress_fraction: 1, fit_seconds: fit.engineSeconds });
    await insertModelResult(trx, run.id, resultOfFit(panel, fit));
    return { id: run.id, label: run.label };
  });
}

/** Removes what insertReturnSeries created (and anything that still refers to those assets). */
export async function removeAssets(knex: Knex, assetIds: number[]): Promise<void> {
  await knex('portfolio_holdings').whereIn('asset_id', assetIds).delete();
  await knex('return_observations').whereIn('asset_id', assetIds).delete();
  await knex('assets').whereIn('id', assetIds).delete();
}
