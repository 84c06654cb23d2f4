/**
 * Portfolio risk under stored models: the figures of the risk page and of `GET /api/portfolios/:id/risk`.
 *
 * Speed: every model, and the sample and Ledoit–Wolf covariances computed on its window and universe, is loaded
 * once per process and kept in memory keyed by the run id (stored results never change). A request then costs a few
 * small queries (the portfolio's holdings, its benchmark's, the approved model ids) and arithmetic restricted to the
 * held assets: O(k·L) for factor models and O(k²) for dense ones, k = number of holdings (the other weights are zero,
 * so restricting the model to the held assets gives exactly the same figures).
 */
import type { Knex } from 'knex';
import { Model } from 'objection';
import type { AuthenticatedUser } from '../auth/access';
import { conflict, notFound, unprocessable } from '../http/errors';
import type { CovarianceModel, DenseCovarianceModel, FactorModel, MeanHandling, ReturnsPanel, Weighting } from '../engine/types';
import { EXPOSURE_CAVEAT, RISK_ASSUMPTIONS, parametricTailRisk, portfolioRisk, varianceBreakdown } from '../engine/risk';
import { fitModel } from '../engine/fit';
import { loadModel, panelSha256, type StoredModel } from './modelStore';
import { holdingsOf, type PortfolioRow } from './portfoliosService';
import { simulatePortfolio } from './portfolioSimulation';
import type { Estimator } from '../../shared/schemas/modelRuns';
import type { PortfolioRisk, VolatilityRow } from '../../shared/schemas/portfolios';

type Actor = Pick<AuthenticatedUser, 'id' | 'email' | 'role'>;

const CONFIDENCE_LEVELS = [0.95, 0.99] as const;
/** q = N/T from which the sample covariance is called unreliable on the page (common practice: q well below 1). */
export const HIGH_CONCENTRATION_RATIO = 0.5;

// ---------------------------------------------------------------------------------------------------------------
// In-memory model cache

interface Comparisons {
  sample: DenseCovarianceModel;
  ledoitWolf: DenseCovarianceModel;
  shrinkage: number;
  /** LW = scale · sample + ridge · I, checked entry by entry when loaded (null: compute LW's quadratic form itself). */
  ledoitWolfAsSample: { scale: number; ridge: number } | null;
  pairwise: boolean;
  repairedToPsd: boolean;
  /** The stored returns still hash to the fingerprint the model was fitted on. */
  dataMatches: boolean;
  seconds: number;
}

interface ModelContext {
  stored: StoredModel;
  byAssetId: Map<number, number>;
  bySymbol: Map<string, number>;
  weighting: Weighting;
  mean: MeanHandling;
  dataSha256: string;
  /** Each model asset's currency as stored in the asset metadata (null when not given). */
  currencies: (string | null)[];
  comparisons: Promise<Comparisons> | null;
}

const MAX_CACHED_MODELS = 8;
const contexts = new Map<number, Promise<ModelContext>>();

function knex(): Knex {
  return Model.knex() as Knex;
}

/** The model of a run with everything the risk page needs, loaded once per process. */
export function modelContext(runId: number): Promise<ModelContext> {
  const cached = contexts.get(runId);
  if (cached) {
    contexts.delete(runId); // least recently used goes first when full
    contexts.set(runId, cached);
    return cached;
  }
  const loading = (async () => {
    const stored = await loadModel(runId);
    const run = await knex()('model_runs as r').join('model_results as m', 'm.run_id', 'r.id').where('r.id', runId).select('r.parameters', 'm.data_sha256').first();
    const parameters = (run?.parameters ?? {}) as { weighting?: Weighting; mean?: MeanHandling };
    const currencyOf = new Map(((await knex()('assets').whereIn('id', stored.assetIds).select('id', 'currency')) as { id: number; currency: string | null }[]).map((a) => [a.id, a.currency]));
    return {
      stored,
      byAssetId: new Map(stored.assetIds.map((id, i) => [id, i])),
      bySymbol: new Map(stored.symbols.map((s, i) => [s.toUpperCase(), i])),
      weighting: parameters.weighting ?? { kind: 'equal' },
      mean: parameters.mean ?? 'sample',
      dataSha256: run?.data_sha256 ?? '',
      currencies: stored.assetIds.map((id) => currencyOf.get(id)?.trim().toUpperCase() || null),
      comparisons: null,
    } satisfies ModelContext;
  })();
  contexts.set(runId, loading);
  loading.catch(() => contexts.delete(runId));
  while (contexts.size > MAX_CACHED_MODELS) contexts.delete(contexts.keys().next().value!);
  return loading;
}

/** Drops cached models (tests; a re-import does not change stored models, whose figures stay valid). */
export function clearRiskCache(): void {
  contexts.clear();
  answerCache.clear();
}

/** The stored returns of the model's window and universe, as the engine's panel (NaN where missing). */
export async function loadModelPanel(stored: StoredModel): Promise<ReturnsPanel> {
  const n = stored.assetIds.length;
  const t = stored.dates.length;
  const values = new Float64Array(t * n).fill(NaN);
  const column = new Map(stored.assetIds.map((id, i) => [id, i]));
  // Packed per asset as (date index, value) pairs, as server/services/modelPanel.ts reads a run's panel.
  const result = await knex().raw(
    `WITH d AS (SELECT date, (row_number() OVER (ORDER BY date) - 1)::int AS k FROM unnest(?::date[]) AS date)
     SELECT o.asset_id, string_agg(int4send(d.k) || float8send(o.value), ''::bytea) AS packed
     FROM return_observations o JOIN d ON d.date = o.date
     WHERE o.asset_id = ANY(?) AND o.date BETWEEN ? AND ?
     GROUP BY o.asset_id`,
    [stored.dates, stored.assetIds, stored.dates[0], stored.dates[t - 1]],
  );
  for (const row of result.rows as { asset_id: number; packed: Buffer }[]) {
    const i = column.get(row.asset_id)!;
    const buf = row.packed;
    for (let off = 0; off + 12 <= buf.length; off += 12) values[buf.readInt32BE(off) * n + i] = buf.readDoubleBE(off + 4);
  }
  return { values, observations: t, assets: n };
}

/** Sample and Ledoit–Wolf covariances on the SAME window, universe, weighting and mean handling as the model. */
function comparisonsFor(context: ModelContext): Promise<Comparisons> {
  if (!context.comparisons) {
    context.comparisons = (async () => {
      const started = performance.now();
      const panel = await loadModelPanel(context.stored);
      // The engine's fitModel with the run's own weighting and mean handling (pairwise-complete when values are
      // missing); no log-likelihood (O(N³)) and the smallest spectrum, which the page does not show.
      const options = { weighting: context.weighting, mean: context.mean, missing: 'pairwise' as const, denseLogLikelihood: false, spectrumSize: 1 };
      const sample = fitModel(panel, { method: 'sample', ...options });
      const shrunk = fitModel(panel, { method: 'ledoit-wolf', ...options });
      const flags = [...sample.diagnostics.flags, ...shrunk.diagnostics.flags];
      return {
        sample: sample.model as DenseCovarianceModel,
        ledoitWolf: shrunk.model as DenseCovarianceModel,
        shrinkage: shrunk.diagnostics.shrinkage ?? 0,
        ledoitWolfAsSample: shrinkageAsScaledSample(sample.model as DenseCovarianceModel, shrunk.model as DenseCovarianceModel),
        pairwise: flags.includes('pairwise-complete-covariance'),
        repairedToPsd: flags.includes('pairwise-covariance-repaired-to-psd'),
        dataMatches: panelSha256(panel.values) === context.dataSha256,
        seconds: (performance.now() - started) / 1000,
      } satisfies Comparisons;
    })();
    context.comparisons.catch(() => {
      context.comparisons = null;
    });
  }
  return context.comparisons;
}

/** Loads (and caches) a run's model and its comparison covariances, e.g. right after approval or at start-up. */
export async function warmModel(runId: number): Promise<void> {
  await comparisonsFor(await modelContext(runId));
}

/**
 * Loads the latest approved model of each estimator in the background, so the first risk page after a start does
 * not wait for them (on data with missing values at N = 1000 the comparison matrices take seconds to repair).
 */
export async function warmApprovedModels(log: (message: string) => void = console.log): Promise<void> {
  const runs = (await knex().raw(RUNS_SQL, { chosen: null })).rows as { id: number; label: string }[];
  for (const run of runs) {
    const started = performance.now();
    await warmModel(run.id);
    log(`[api] risk figures of ${run.label} ready (${((performance.now() - started) / 1000).toFixed(1)} s)`);
  }
}

// ---------------------------------------------------------------------------------------------------------------
// Restricting a model to the held assets

interface Positions {
  /** Model indices of the covered holdings, in holding order. */
  index: number[];
  weights: number[];
  symbols: string[];
  names: (string | null)[];
  uncovered: { symbol: string; weight: number }[];
}

function restrict(model: CovarianceModel, index: readonly number[]): CovarianceModel {
  const k = index.length;
  const mean = new Float64Array(k);
  for (let j = 0; j < k; j++) mean[j] = model.mean[index[j]];
  if (model.kind === 'factor') {
    const l = model.factors;
    const loadings = new Float64Array(k * l);
    const specificVariance = new Float64Array(k);
    for (let j = 0; j < k; j++) {
      const i = index[j];
      for (let f = 0; f < l; f++) loadings[j * l + f] = model.loadings[i * l + f];
      specificVariance[j] = model.specificVariance[i];
    }
    return { kind: 'factor', method: model.method, assets: k, factors: l, mean, loadings, specificVariance };
  }
  const n = model.assets;
  const covariance = new Float64Array(k * k);
  for (let a = 0; a < k; a++) {
    const row = index[a] * n;
    for (let b = 0; b < k; b++) covariance[a * k + b] = model.covariance[row + index[b]];
  }
  return { kind: 'dense', method: model.method, assets: k, mean, covariance };
}

interface HeldWeights {
  assetId: number | null;
  symbol: string;
  name: string | null;
  weight: number;
}

function positionsIn(context: ModelContext, holdings: readonly HeldWeights[]): Positions {
  const out: Positions = { index: [], weights: [], symbols: [], names: [], uncovered: [] };
  for (const h of holdings) {
    const i = h.assetId !== null ? context.byAssetId.get(h.assetId) : context.bySymbol.get(h.symbol.toUpperCase());
    if (i === undefined) out.uncovered.push({ symbol: h.symbol, weight: h.weight });
    else {
      out.index.push(i);
      out.weights.push(h.weight);
      out.symbols.push(h.symbol);
      out.names.push(h.name);
    }
  }
  return out;
}

/** Per-period volatility of the covered part of a portfolio under a factor model: O(k·L). */
function factorVolatility(model: FactorModel, positions: Positions): number {
  if (!positions.index.length) return 0;
  return varianceBreakdown(restrict(model, positions.index), positions.weights).volatility;
}

/**
 * Per-period volatility of the covered part of a portfolio under a dense model: the quadratic form
 * wᵀCw = Σ_a w_a (C_aa w_a + 2 Σ_{b<a} C_ab w_b) read in place over the held assets, O(k²/2), never copying a k × k
 * block. The held assets are visited in the model's order, so each row is read forwards (measured: the scattered
 * reads of holding order cost about twice as much at k = 500 of N = 1000).
 */
function denseVolatility(model: DenseCovarianceModel, positions: Positions): number {
  const k = positions.index.length;
  const n = model.assets;
  const order = Array.from({ length: k }, (_, j) => j).sort((x, y) => positions.index[x] - positions.index[y]);
  const index = Int32Array.from(order, (j) => positions.index[j]);
  const w = Float64Array.from(order, (j) => positions.weights[j]);
  const c = model.covariance;
  let v = 0;
  for (let a = 0; a < k; a++) {
    const row = index[a] * n;
    let s = 0;
    for (let b = 0; b < a; b++) s += c[row + index[b]] * w[b];
    const wa = w[a];
    v += wa * (c[row + index[a]] * wa + 2 * s);
  }
  return Math.sqrt(Math.max(v, 0));
}

/**
 * Ledoit–Wolf is (1 − δ) S + δ μ I (Ledoit & Wolf 2004): when the stored matrices say so entry by entry, with S the
 * sample matrix up to its divisor, answers (scale, ridge) such that LW = scale · sample + ridge · I, so a portfolio's
 * LW variance is scale · wᵀSw + ridge · Σ w², with no second pass over the matrix. Null when any entry disagrees
 * (then both quadratic forms are computed).
 */
export function shrinkageAsScaledSample(sample: DenseCovarianceModel, shrunk: DenseCovarianceModel): { scale: number; ridge: number } | null {
  const n = sample.assets;
  const s = sample.covariance;
  const l = shrunk.covariance;
  let at = -1;
  for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) if (at < 0 || Math.abs(s[i * n + j]) > Math.abs(s[at])) at = i * n + j;
  if (at < 0 || s[at] === 0) return null;
  const scale = l[at] / s[at];
  const ridge = l[0] - scale * s[0];
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      const expected = scale * s[i * n + j] + (i === j ? ridge : 0);
      // Relative to the entry's own scale √(LWᵢᵢ LWⱼⱼ), so no one asset's variance sets the bar for all.
      if (Math.abs(l[i * n + j] - expected) > 1e-12 * Math.sqrt(l[i * n + i] * l[j * n + j])) return null;
    }
  }
  return { scale, ridge };
}

// ---------------------------------------------------------------------------------------------------------------
// The risk answer

export interface RiskRequest {
  model?: number;
  horizon: number;
  draws: number;
  seed: number;
  /** How many of the largest contributors to list; the rest are summed (default: every one). */
  contributors?: number | 'all';
  /** Include the factor return history (default: no). */
  history?: boolean;
}

interface RunRow {
  id: number;
  label: string;
  estimator: Estimator;
  lifecycle: string;
  approved_at: Date | null;
}

type RunRowWithStatus = RunRow & { status: string };
type ResolvedRuns = { primary: RunRow; latestByEstimator: Map<Estimator, RunRow> };

/** The latest approved run of each estimator, and the chosen run (part of savedRiskRows' one statement). */
const RUNS_SQL = `(SELECT DISTINCT ON (estimator) id, label, estimator, lifecycle, approved_at, status FROM model_runs
     WHERE lifecycle = 'approved' AND status = 'succeeded' ORDER BY estimator, approved_at DESC NULLS LAST, id DESC)
   UNION
   SELECT id, label, estimator, lifecycle, approved_at, status FROM model_runs WHERE id = :chosen`;

/** The chosen run (or the latest approved one) and the latest approved run of each estimator; `rows` newest approval first. */
function pickRuns(rows: RunRowWithStatus[], chosen: number | undefined): ResolvedRuns {
  const latestByEstimator = new Map<Estimator, RunRow>();
  for (const r of rows) if (r.lifecycle === 'approved' && r.status === 'succeeded' && !latestByEstimator.has(r.estimator)) latestByEstimator.set(r.estimator, r);
  let primary: RunRowWithStatus | undefined;
  if (chosen !== undefined) {
    primary = rows.find((r) => r.id === chosen);
    if (!primary) throw notFound(`Model run ${chosen} does not exist`);
    if (primary.status !== 'succeeded') throw conflict(`Model run ${primary.label} has no fitted model (status: ${primary.status})`);
  } else {
    primary = rows.find((r) => r.lifecycle === 'approved' && r.status === 'succeeded');
    if (!primary) throw conflict('No model is approved yet: an analyst fits a model and a second analyst approves it before portfolio risk can be shown');
  }
  return { primary, latestByEstimator };
}

const PERIOD_NAMES: Record<number, string> = { 252: 'trading days', 52: 'weeks', 12: 'months' };

/**
 * With no model chosen the latest approved model is used; when its universe holds none of the portfolio's assets
 * (say, a newer model fitted on another market), the newest approved model whose universe holds any of them is used
 * instead, and the answer says so. Costs a query only in that case.
 */
async function coveringDefault(runs: ResolvedRuns, chosen: number | undefined, assetIds: readonly (number | null)[]): Promise<{ runs: ResolvedRuns; note: string | null }> {
  const ids = assetIds.filter((id): id is number => id !== null);
  if (chosen !== undefined || !ids.length) return { runs, note: null };
  const latest = await modelContext(runs.primary.id);
  if (ids.some((id) => latest.byAssetId.has(id))) return { runs, note: null };
  const covering = (await knex()('model_runs as r')
    .join('model_results as m', 'm.run_id', 'r.id')
    .where({ 'r.lifecycle': 'approved', 'r.status': 'succeeded' })
    .whereRaw('m.asset_ids && ?::int[]', [ids])
    .orderByRaw('r.approved_at DESC NULLS LAST, r.id DESC')
    .first('r.id', 'r.label', 'r.estimator', 'r.lifecycle', 'r.approved_at')) as RunRow | undefined;
  if (!covering) return { runs, note: null }; // computeRisk then says that the model covers none of the holdings
  return {
    runs: { primary: covering, latestByEstimator: runs.latestByEstimator },
    note: `The latest approved model, ${runs.primary.label}, covers none of this portfolio's holdings: ${covering.label} is the newest approved model that does.`,
  };
}

async function computeRisk(
  portfolio: { id: number; name: string; baseCurrency: string },
  holdings: HeldWeights[],
  benchmark: { id: number; name: string; holdings: HeldWeights[] } | null,
  request: RiskRequest,
  whatIf: boolean,
  resolvedRuns: ResolvedRuns,
  modelNote: string | null = null,
): Promise<PortfolioRisk> {
  const started = performance.now();
  const { primary, latestByEstimator } = resolvedRuns;
  const context = await modelContext(primary.id);
  const { stored } = context;
  const header = stored.header;
  const model = stored.model;
  const ppy = header.periodsPerYear;
  const rootYear = Math.sqrt(ppy);

  const positions = positionsIn(context, holdings);
  if (!positions.index.length) {
    throw unprocessable(`None of the portfolio's holdings is in model ${header.label}'s universe`, [
      { path: 'holdings', message: `the model covers ${header.assets} assets; none of the ${holdings.length} holdings is among them` },
    ]);
  }

  // The union of portfolio and benchmark assets: the engine computes risk, active risk and contributions on it.
  let benchmarkPositions: Positions | null = null;
  const unionIndex = [...positions.index];
  const slot = new Map(unionIndex.map((i, j) => [i, j]));
  if (benchmark) {
    benchmarkPositions = positionsIn(context, benchmark.holdings);
    for (const i of benchmarkPositions.index) if (!slot.has(i)) slot.set(i, unionIndex.push(i) - 1);
  }
  const sub = restrict(model, unionIndex);
  const w = new Float64Array(unionIndex.length);
  positions.index.forEach((i, j) => (w[slot.get(i)!] += positions.weights[j]));
  let bw: Float64Array | undefined;
  if (benchmarkPositions) {
    bw = new Float64Array(unionIndex.length);
    benchmarkPositions.index.forEach((i, j) => (bw![slot.get(i)!] += benchmarkPositions!.weights[j]));
  }
  const risk = portfolioRisk(sub, w, { periodsPerYear: ppy, horizon: request.horizon, confidenceLevels: CONFIDENCE_LEVELS, benchmark: bw });

  // Side by side: FA and PPCA (this model when of that kind, else the latest approved one), sample and LW on this window.
  const comparisons = await comparisonsFor(context);
  const sampleVol = denseVolatility(comparisons.sample, positions);
  let lwVol: number;
  if (comparisons.ledoitWolfAsSample) {
    const { scale, ridge } = comparisons.ledoitWolfAsSample;
    const sumSquares = positions.weights.reduce((sum, x) => sum + x * x, 0);
    lwVol = Math.sqrt(Math.max(scale * sampleVol * sampleVol + ridge * sumSquares, 0));
  } else lwVol = denseVolatility(comparisons.ledoitWolf, positions);
  const coveredWeight = positions.weights.reduce((s, x) => s + x, 0);
  const volatilities: VolatilityRow[] = [];
  for (const estimator of ['fa', 'ppca'] as const) {
    if (model.kind === 'factor' && model.method === estimator) {
      volatilities.push({ estimator, source: `${header.label} (this page's model)`, runId: header.runId, volatility: risk.volatility, annualisedVolatility: risk.annualisedVolatility, ratioToSample: null, sameWindow: true, coveredWeight, note: null });
      continue;
    }
    const other = latestByEstimator.get(estimator);
    if (!other) {
      volatilities.push({ estimator, source: 'no approved model of this kind', runId: null, volatility: null, annualisedVolatility: null, ratioToSample: null, sameWindow: false, coveredWeight: null, note: `No ${estimator === 'fa' ? 'factor-analysis' : 'probabilistic PCA'} model is approved yet.` });
      continue;
    }
    const otherContext = await modelContext(other.id);
    const otherPositions = positionsIn(otherContext, holdings);
    const otherModel = otherContext.stored.model;
    const vol = otherModel.kind === 'factor' ? factorVolatility(otherModel, otherPositions) : (otherPositions.index.length ? denseVolatility(otherModel, otherPositions) : 0);
    const h = otherContext.stored.header;
    const sameWindow = h.firstDate === header.firstDate && h.lastDate === header.lastDate && h.assets === header.assets && h.observations === header.observations;
    const covered = otherPositions.weights.reduce((s, x) => s + x, 0);
    volatilities.push({
      estimator,
      source: `${h.label}, latest approved (${h.firstDate} to ${h.lastDate}, ${h.assets} assets)`,
      runId: h.runId,
      volatility: vol,
      annualisedVolatility: vol * Math.sqrt(h.periodsPerYear),
      ratioToSample: null,
      sameWindow,
      coveredWeight: covered,
      note: sameWindow ? null : 'Fitted on a different window or universe than the comparison figures: read the ratio with care.',
    });
  }
  const window = `${header.firstDate} to ${header.lastDate}, ${header.assets} assets, ${header.observations} observations`;
  const dataNote = comparisons.dataMatches ? '' : ' The stored returns have changed since the model was fitted (a later import): these figures use the returns stored now.';
  const pairwiseNote = comparisons.pairwise ? ' Missing values: pairwise-complete estimate' + (comparisons.repairedToPsd ? ', repaired to the nearest positive semidefinite matrix.' : '.') : '';
  volatilities.push({
    estimator: 'sample',
    source: `computed on ${header.label}'s window (${window})`,
    runId: null,
    volatility: sampleVol,
    annualisedVolatility: sampleVol * rootYear,
    ratioToSample: 1,
    sameWindow: true,
    coveredWeight,
    note: (pairwiseNote + dataNote).trim() || null,
  });
  volatilities.push({
    estimator: 'ledoit-wolf',
    source: `computed on ${header.label}'s window (shrinkage δ = ${comparisons.shrinkage.toFixed(4)})`,
    runId: null,
    volatility: lwVol,
    annualisedVolatility: lwVol * rootYear,
    ratioToSample: null,
    sameWindow: true,
    coveredWeight,
    note: (pairwiseNote + dataNote).trim() || null,
  });
  if (model.kind === 'dense') {
    // A dense model of the page: it is itself the sample or LW row; say so.
    const row = volatilities.find((v) => v.estimator === model.method);
    if (row) row.source = `${header.label} (this page's model); ${row.source}`;
  }
  for (const row of volatilities) row.ratioToSample = row.volatility !== null && sampleVol > 0 ? row.volatility / sampleVol : null;

  const q = header.assets / header.observations;
  const sampleNote =
    q >= 1
      ? `q = N/T = ${q.toFixed(2)}: there are more assets than observations, so the sample covariance is singular. It understates the risk of optimised portfolios and is unreliable here; prefer the factor-model and shrinkage figures.`
      : q >= HIGH_CONCENTRATION_RATIO
        ? `q = N/T = ${q.toFixed(2)} is high: the sample covariance is noisy at this ratio of assets to observations, understates the risk of optimised portfolios and is unreliable here.`
        : null;

  // Returns are used as stored, each in its asset's own currency: say when that leaves exchange-rate risk out.
  const foreign = new Map<string, number>();
  positions.index.forEach((i, j) => {
    const currency = context.currencies[i];
    if (currency && currency !== portfolio.baseCurrency) foreign.set(currency, (foreign.get(currency) ?? 0) + positions.weights[j]);
  });
  const foreignWeight = [...foreign.values()].reduce((sum, x) => sum + x, 0);
  const currencyNote = foreign.size
    ? `Holdings worth ${(foreignWeight * 100).toFixed(1)} % of the weight are in ${[...foreign.keys()].sort().join(', ')}, not the portfolio's base currency ${portfolio.baseCurrency}: ` +
      `their returns are used as stored, in their own currency, so these figures leave out exchange-rate risk against ${portfolio.baseCurrency}.`
    : null;

  // Monte Carlo from the generative model, in the portfolio's own dimension (see portfolioSimulation.ts).
  const exposures = risk.exposure ? risk.exposure.exposures : new Float64Array(0);
  const residualVariance = risk.exposure ? (risk.specificVariance ?? 0) : risk.variance;
  const simulation = simulatePortfolio({
    exposures,
    residualVariance,
    meanReturn: risk.meanReturn,
    includeMean: false,
    draws: request.draws,
    seed: request.seed,
    horizon: request.horizon,
    confidenceLevels: CONFIDENCE_LEVELS,
  });

  // Factor return history: (Wᵀw)ᵀ z_t over the window's dates, z_t the stored factor scores.
  let factorReturnHistory: PortfolioRisk['factorReturnHistory'] = null;
  if (request.history && model.kind === 'factor' && stored.factorScores && risk.exposure) {
    const l = model.factors;
    const scores = stored.factorScores;
    factorReturnHistory = stored.dates.map((date, t) => {
      let s = 0;
      for (let k = 0; k < l; k++) s += exposures[k] * scores[t * l + k];
      return { date, value: s };
    });
  }

  const allContributors = positions.index
    .map((i, j) => {
      const at = slot.get(i)!;
      return {
        symbol: positions.symbols[j],
        assetName: positions.names[j],
        weight: positions.weights[j],
        marginal: risk.marginalContributions[at] * rootYear,
        contribution: risk.contributions[at] * rootYear,
        percent: risk.percentContributions[at],
      };
    })
    .sort((a, b) => Math.abs(b.percent) - Math.abs(a.percent));
  // Benchmark-only assets have zero weight in the portfolio, so they add nothing; keep the sum check exact.
  const listed = request.contributors === undefined || request.contributors === 'all' ? allContributors.length : request.contributors;
  const contributors = allContributors.slice(0, listed);
  const rest = allContributors.slice(listed);
  const otherContributors = rest.length
    ? {
        count: rest.length,
        weight: rest.reduce((s, c) => s + c.weight, 0),
        contribution: rest.reduce((s, c) => s + c.contribution, 0),
        percent: rest.reduce((s, c) => s + c.percent, 0),
      }
    : null;

  let trackingError: PortfolioRisk['trackingError'] = null;
  if (benchmark && risk.active && benchmarkPositions) {
    trackingError = {
      benchmark: { id: benchmark.id, name: benchmark.name },
      volatility: risk.active.volatility,
      annualisedVolatility: risk.active.annualisedVolatility,
      uncoveredBenchmarkWeight: benchmarkPositions.uncovered.reduce((s, x) => s + x.weight, 0),
    };
  }

  const answer: PortfolioRisk = {
    portfolio: { id: portfolio.id, name: portfolio.name },
    whatIf,
    model: {
      runId: header.runId,
      label: header.label,
      method: header.estimator,
      lifecycle: primary.lifecycle,
      approvedAt: primary.approved_at ? new Date(primary.approved_at).toISOString() : null,
      windowStart: header.firstDate,
      windowEnd: header.lastDate,
      observations: header.observations,
      assets: header.assets,
      factors: header.factors,
      periodsPerYear: ppy,
    },
    weightSum: holdings.reduce((s, h) => s + h.weight, 0),
    holdings: holdings.length,
    uncovered: positions.uncovered,
    coveredWeight,
    volatilities,
    concentrationRatio: q,
    sampleNote,
    currencyNote,
    modelNote,
    split:
      risk.factorVariance !== null && risk.specificVariance !== null
        ? {
            factorVariance: risk.factorVariance,
            specificVariance: risk.specificVariance,
            factorShare: risk.variance > 0 ? risk.factorVariance / risk.variance : 0,
            specificShare: risk.variance > 0 ? risk.specificVariance / risk.variance : 0,
          }
        : null,
    annualisedVolatility: risk.annualisedVolatility,
    volatility: risk.volatility,
    contributors,
    otherContributors,
    trackingError,
    tailRisk: {
      horizon: request.horizon,
      periodsLabel: PERIOD_NAMES[ppy] ?? 'periods',
      parametric: CONFIDENCE_LEVELS.map((c) => {
        const t = parametricTailRisk(risk.volatility, 0, request.horizon, c);
        return { confidence: c, valueAtRisk: t.valueAtRisk, expectedShortfall: t.expectedShortfall };
      }),
      monteCarlo: { draws: simulation.draws, seed: simulation.seed, simulatedVolatility: simulation.simulatedVolatility, levels: simulation.levels },
    },
    exposure: risk.exposure
      ? { factorVarianceShare: risk.exposure.factorVarianceShare, exposureNorm: risk.exposure.exposureNorm, exposures: Array.from(risk.exposure.exposures), caveat: EXPOSURE_CAVEAT }
      : null,
    factorReturnHistory,
    assumptions: [
      ...RISK_ASSUMPTIONS,
      `Estimated on ${window} (${header.label}, ${primary.lifecycle}); VaR and expected shortfall are losses as a fraction of portfolio value over ${request.horizon} ${PERIOD_NAMES[ppy] ?? 'periods'}, zero mean.`,
      ...(currencyNote ? [currencyNote] : []),
      ...(positions.uncovered.length ? [`${positions.uncovered.length} holding(s) outside the model's universe are left out of every figure (weight ${positions.uncovered.reduce((s, x) => s + x.weight, 0).toFixed(4)}).`] : []),
    ],
    elapsedMs: 0,
  };
  answer.elapsedMs = performance.now() - started;
  return answer;
}

/**
 * Holdings of a portfolio, cached per process by (id, version = updated_at in µs): every change of holdings goes
 * through replaceHoldings, which moves updated_at, so a cached entry is never stale.
 */
const holdingsCache = new Map<string, HeldWeights[]>();
async function cachedHoldings(portfolioId: number, version: number): Promise<HeldWeights[]> {
  const key = `${portfolioId}:${version}`;
  const hit = holdingsCache.get(key);
  if (hit) return hit;
  const rows = (await holdingsOf(portfolioId)).map((h) => ({ assetId: h.asset_id, symbol: h.symbol, name: h.asset_name, weight: h.weight }));
  for (const k of holdingsCache.keys()) if (k.startsWith(`${portfolioId}:`)) holdingsCache.delete(k);
  holdingsCache.set(key, rows);
  while (holdingsCache.size > 200) holdingsCache.delete(holdingsCache.keys().next().value!);
  return rows;
}

/** The benchmark's holdings, or null without one (or when the caller may not read it: then no tracking error). */
async function benchmarkFrom(row: Pick<PortfolioRow, 'id' | 'name' | 'version'> | null): Promise<{ id: number; name: string; version: number; holdings: HeldWeights[] } | null> {
  if (!row) return null;
  const holdings = await cachedHoldings(row.id, row.version);
  return holdings.length ? { id: row.id, name: row.name, version: row.version, holdings } : null;
}

interface SavedPortfolioRow {
  id: number;
  name: string;
  base_currency: string;
  benchmark_portfolio_id: number | null;
  version: number;
}

/**
 * The portfolio, its benchmark and the model runs in ONE round trip (the hot path of GET …/risk). The reader scope is
 * portfoliosService's scopeForReader: PMs read their own funds and every benchmark, other roles everything.
 */
async function savedRiskRows(user: Actor, portfolioId: number, chosen: number | undefined) {
  const readable = `(NOT :pmOnly OR owner_id = :userId OR kind = 'benchmark')`;
  const columns = `id, name, base_currency, benchmark_portfolio_id, (extract(epoch FROM updated_at) * 1000000)::bigint AS version`;
  const result = await knex().raw(
    `WITH p AS (SELECT ${columns} FROM portfolios WHERE id = :portfolioId AND ${readable}),
          b AS (SELECT ${columns} FROM portfolios WHERE id = (SELECT benchmark_portfolio_id FROM p) AND ${readable}),
          runs AS (${RUNS_SQL})
     SELECT (SELECT row_to_json(p) FROM p) AS portfolio, (SELECT row_to_json(b) FROM b) AS benchmark,
            (SELECT coalesce(json_agg(runs ORDER BY approved_at DESC NULLS LAST, id DESC), '[]') FROM runs) AS runs`,
    { pmOnly: user.role === 'pm', userId: user.id, portfolioId, chosen: chosen ?? null },
  );
  return result.rows[0] as { portfolio: SavedPortfolioRow | null; benchmark: SavedPortfolioRow | null; runs: RunRowWithStatus[] };
}

/** The readable portfolio, its benchmark's holdings and the model runs; a portfolio the caller may not read answers 404 before anything is said about models. */
async function readableRiskInputs(user: Actor, portfolioId: number, chosen: number | undefined) {
  const rows = await savedRiskRows(user, portfolioId, chosen);
  const row = rows.portfolio;
  if (!row) throw notFound(`Portfolio ${portfolioId} does not exist or is not yours to see`);
  const runs = pickRuns(rows.runs, chosen);
  const benchmark = await benchmarkFrom(rows.benchmark);
  return { row, portfolio: { id: row.id, name: row.name, baseCurrency: row.base_currency.trim() }, benchmark, runs };
}

async function savedRiskInputs(user: Actor, portfolioId: number, request: RiskRequest) {
  const { row, portfolio, benchmark, runs } = await readableRiskInputs(user, portfolioId, request.model);
  const holdings = await cachedHoldings(row.id, row.version);
  if (!holdings.length) throw unprocessable(`Portfolio '${row.name}' has no holdings yet`, [{ path: 'holdings', message: 'add holdings before asking for risk' }]);
  const resolved = await coveringDefault(runs, request.model, holdings.map((h) => h.assetId));
  return { portfolio, version: row.version, holdings, benchmark, runs: resolved.runs, modelNote: resolved.note };
}

/**
 * The saved portfolio's risk as JSON text, kept per process for identical inputs: the same portfolio version, the
 * same benchmark version, the same model runs (and their lifecycle), the same horizon, draws and seed. Every input is
 * immutable under its key (holdings change only with a new version, stored model results never change), so a kept
 * answer is exactly what a recomputation would give; what-if answers are never kept.
 */
const answerCache = new Map<string, string>();
const MAX_CACHED_ANSWERS = 64;

export async function portfolioRiskJson(user: Actor, portfolioId: number, request: RiskRequest): Promise<{ json: string; cached: boolean }> {
  const inputs = await savedRiskInputs(user, portfolioId, request);
  const { primary, latestByEstimator } = inputs.runs;
  const key = JSON.stringify([
    inputs.portfolio.id,
    inputs.version,
    inputs.portfolio.name,
    inputs.portfolio.baseCurrency,
    inputs.benchmark ? [inputs.benchmark.id, inputs.benchmark.version, inputs.benchmark.name] : null,
    [primary.id, primary.lifecycle, primary.approved_at ? new Date(primary.approved_at).getTime() : null],
    [...latestByEstimator.entries()].map(([e, r]) => [e, r.id]),
    request.horizon,
    request.draws,
    request.seed,
    request.contributors ?? 'all',
    request.history ?? false,
  ]);
  const hit = answerCache.get(key);
  if (hit !== undefined) {
    answerCache.delete(key);
    answerCache.set(key, hit);
    return { json: hit, cached: true };
  }
  const answer = await computeRisk(inputs.portfolio, inputs.holdings, inputs.benchmark, request, false, inputs.runs, inputs.modelNote);
  const json = JSON.stringify(answer);
  // A substitute default model is found by a query the key does not cover (say, that model retired since): not kept.
  if (inputs.modelNote) return { json, cached: false };
  answerCache.set(key, json);
  while (answerCache.size > MAX_CACHED_ANSWERS) answerCache.delete(answerCache.keys().next().value!);
  return { json, cached: false };
}

/** Risk of edited weights for a saved portfolio (nothing is stored). Weights are used as given. */
export async function whatIfRisk(user: Actor, portfolioId: number, weights: { symbol: string; weight: number }[], request: RiskRequest): Promise<PortfolioRisk> {
  // The portfolio, its benchmark and the runs in one query, as for the saved portfolio's risk.
  const { row, portfolio, benchmark, runs } = await readableRiskInputs(user, portfolioId, request.model);
  const { primary } = runs;
  // Symbols: unknown ones and duplicates name their row; the asset table is asked only for symbols outside the model.
  const context = await modelContext(primary.id);
  const issues: { path: string; message: string }[] = [];
  const seen = new Map<string, number>();
  const symbols = weights.map((h) => h.symbol.trim().toUpperCase());
  const outside = symbols.filter((s) => s && !context.bySymbol.has(s));
  const known = new Map<string, { id: number; name: string | null }>();
  if (outside.length) {
    for (const a of (await knex()('assets').whereIn('symbol', outside).select('id', 'symbol', 'name')) as { id: number; symbol: string; name: string }[]) known.set(a.symbol.toUpperCase(), a);
  }
  const held: HeldWeights[] = [];
  weights.forEach((h, i) => {
    const symbol = symbols[i];
    if (!symbol) issues.push({ path: `holdings.${i}.symbol`, message: `row ${i + 1}: the symbol is empty` });
    else if (seen.has(symbol)) issues.push({ path: `holdings.${i}.symbol`, message: `row ${i + 1}: '${symbol}' duplicates row ${seen.get(symbol)! + 1}` });
    else if (!context.bySymbol.has(symbol) && !known.has(symbol)) issues.push({ path: `holdings.${i}.symbol`, message: `row ${i + 1}: unknown symbol '${symbol}'` });
    seen.set(symbol, seen.get(symbol) ?? i);
    const index = context.bySymbol.get(symbol);
    held.push({ assetId: index !== undefined ? context.stored.assetIds[index] : (known.get(symbol)?.id ?? null), symbol, name: known.get(symbol)?.name ?? null, weight: h.weight });
  });
  if (issues.length) throw unprocessable(`The what-if weights are not valid (${issues.length} problem${issues.length === 1 ? '' : 's'})`, issues);
  // Asset names for the contributors grid come from the saved holdings where known.
  const names = new Map((await cachedHoldings(row.id, row.version)).map((h) => [h.symbol.toUpperCase(), h.name]));
  for (const h of held) if (h.name === null) h.name = names.get(h.symbol) ?? null;
  const resolved = await coveringDefault(runs, request.model, held.map((h) => h.assetId));
  return computeRisk(portfolio, held, benchmark, request, true, resolved.runs, resolved.note);
}

export type { FactorModel };
