/**
 * Model runs: creating (queueing) fits, their status and results, cancelling, the approval lifecycle
 * (draft → approved by a second person → retired, audited) and comparing two versions.
 */
import type { Knex } from 'knex';
import { Model } from 'objection';
import { ModelRun } from '../models/ModelRun';
import { User } from '../models/User';
import { conflict, forbidden, notFound, unprocessable } from '../http/errors';
import { recordAudit } from './auditService';
import { loadModel, type StoredModel } from './modelStore';
import { warmModel } from './portfolioRiskService';
import { observationCounts, resolveUniverse, windowDates } from './modelPanel';
import { MODEL_FIT_CHANNEL, ensureModelFitQueue, modelFitQueue, queueSender } from './modelQueue';
import type { AuthenticatedUser } from '../auth/access';
import { communalities, loadingSubspaceAngles, varimax } from '../engine/rotation';
import { varianceBreakdown } from '../engine/risk';
import type { FactorModel } from '../engine/types';
import {
  type ModelRun as ModelRunDto,
  type ModelRunParameters,
  type ModelResults,
  type ModelComparison,
  MIN_OBSERVATIONS_PER_ASSET,
  isFactorEstimator,
} from '../../shared/schemas/modelRuns';

const knex = () => Model.knex();
const iso = (d: Date | string | null | undefined) => (d ? (d instanceof Date ? d.toISOString() : new Date(d).toISOString()) : null);

type UserRef = { id: number; name: string; email: string } | null;

async function usersById(ids: (number | null)[]): Promise<Map<number, UserRef>> {
  const wanted = [...new Set(ids.filter((i): i is number => i !== null))];
  const rows = wanted.length ? await User.query().select('id', 'name', 'email').whereIn('id', wanted) : [];
  return new Map(rows.map((u) => [u.id, { id: u.id, name: u.name, email: u.email }]));
}

interface Summary {
  run_id: number;
  assets: number;
  observations: number;
  factors: number;
  first_date: string | null;
  last_date: string | null;
}

async function summaries(runIds: number[]): Promise<Map<number, Summary>> {
  if (!runIds.length) return new Map();
  const rows: Summary[] = await knex()('model_results')
    .select('run_id', 'assets', 'observations', 'factors', knex().raw('dates[1]::text AS first_date'), knex().raw('dates[array_upper(dates, 1)]::text AS last_date'))
    .whereIn('run_id', runIds);
  return new Map(rows.map((r) => [r.run_id, r]));
}

/** Runs as the API shows them. */
export async function toDtos(runs: ModelRun[]): Promise<ModelRunDto[]> {
  const users = await usersById(runs.flatMap((r) => [r.created_by, r.approved_by, r.retired_by]));
  const sums = await summaries(runs.filter((r) => r.status === 'succeeded').map((r) => r.id));
  return runs.map((r) => {
    const s = sums.get(r.id);
    return {
      id: r.id,
      label: r.label,
      estimator: r.estimator,
      parameters: r.parameters,
      status: r.status,
      progress: { stage: r.progress_stage, iteration: r.progress_iteration, logLikelihood: r.progress_log_likelihood, fraction: r.progress_fraction },
      error: r.error,
      attempts: r.attempts,
      worker: r.worker ?? null,
      createdBy: users.get(r.created_by) ?? null,
      createdAt: iso(r.created_at)!,
      startedAt: iso(r.started_at),
      finishedAt: iso(r.finished_at),
      fitSeconds: r.fit_seconds,
      lifecycle: r.lifecycle,
      approvedBy: r.approved_by ? (users.get(r.approved_by) ?? null) : null,
      approvedAt: iso(r.approved_at),
      approvalComment: r.approval_comment,
      retiredBy: r.retired_by ? (users.get(r.retired_by) ?? null) : null,
      retiredAt: iso(r.retired_at),
      retireComment: r.retire_comment,
      summary: s ? { assets: s.assets, observations: s.observations, factors: s.factors, firstDate: s.first_date, lastDate: s.last_date } : null,
    };
  });
}

export async function toDto(run: ModelRun): Promise<ModelRunDto> {
  return (await toDtos([run]))[0];
}

async function findRun(id: number, trx?: Knex.Transaction): Promise<ModelRun> {
  const run = await ModelRun.query(trx).findById(id);
  if (!run) throw notFound(`Model run ${id} does not exist`);
  return run;
}

/**
 * Checks a run request against the data before it is queued, so mistakes come back at once with the field named:
 * the universe resolves, the window holds at least MIN_OBSERVATIONS_PER_ASSET dates and every asset has that many
 * observations in it (unless its gaps are to be dropped), and the factors are fewer than the assets.
 */
export async function validateRunRequest(parameters: ModelRunParameters): Promise<{ assets: number; dates: number }> {
  const db = knex();
  const assets = await resolveUniverse(db, parameters.universe);
  if (assets.length < 2) throw unprocessable(`The universe holds ${assets.length} asset(s) with data; a model needs at least 2`, [{ path: 'universe', message: 'fewer than 2 assets with data' }]);
  const ids = assets.map((a) => a.id);
  const dates = await windowDates(db, ids, parameters.window);
  if (dates.length < MIN_OBSERVATIONS_PER_ASSET) {
    throw unprocessable(`The window holds ${dates.length} dates; at least ${MIN_OBSERVATIONS_PER_ASSET} observations per asset are needed`, [{ path: 'window', message: `${dates.length} dates in the window, at least ${MIN_OBSERVATIONS_PER_ASSET} needed` }]);
  }
  if (parameters.missing !== 'drop-assets') {
    const counts = await observationCounts(db, ids, dates[0], dates[dates.length - 1]);
    const short = assets.filter((a) => (counts.get(a.id) ?? 0) < MIN_OBSERVATIONS_PER_ASSET);
    if (short.length) {
      throw unprocessable(
        `Too few observations: every asset needs at least ${MIN_OBSERVATIONS_PER_ASSET} in the window ${dates[0]} … ${dates[dates.length - 1]}; ${short.length} asset(s) have fewer (${short.slice(0, 10).map((a) => `${a.symbol}: ${counts.get(a.id) ?? 0}`).join(', ')}${short.length > 10 ? ' …' : ''}). Widen the window, narrow the universe, or choose the missing-data policy "drop-assets".`,
        short.slice(0, 100).map((a) => ({ path: 'window', message: `${a.symbol} has ${counts.get(a.id) ?? 0} observations in the window` })),
      );
    }
  }
  if (isFactorEstimator(parameters.estimator) && typeof parameters.factors === 'number' && parameters.factors >= assets.length) {
    throw unprocessable(`The number of factors (${parameters.factors}) must be below the number of assets (${assets.length})`, [{ path: 'factors', message: `must be below the number of assets (${assets.length})` }]);
  }
  return { assets: assets.length, dates: dates.length };
}

const LABEL_PREFIX: Record<string, string> = { fa: 'FA', ppca: 'PPCA', sample: 'SAMPLE', 'ledoit-wolf': 'LW' };

/** Inserts a queued run (and its audit event) in the caller's transaction; the job is sent after commit. */
export async function insertRun(trx: Knex.Transaction, parameters: ModelRunParameters, user: { id: number; email: string }, ip: string | null, extra: Partial<ModelRun> = {}): Promise<ModelRun> {
  const { label, ...rest } = parameters;
  const placeholder = `pending-${Date.now()}-${Math.random()}`;
  const inserted = await ModelRun.query(trx).insert({ label: placeholder, estimator: parameters.estimator, parameters: { ...rest, ...(label ? { label } : {}) }, status: 'queued', created_by: user.id, ...extra } as never);
  const finalLabel = `${LABEL_PREFIX[parameters.estimator]}-${String(inserted.id).padStart(4, '0')}${label ? ` ${label}` : ''}`;
  const run = await ModelRun.query(trx).patchAndFetchById(inserted.id, { label: finalLabel });
  await recordAudit({ actor: user, action: 'model-run.created', objectType: 'model_run', objectId: run.id, ip, details: { label: run.label, parameters } }, trx);
  return run;
}

/** Validates, stores the run as queued and sends its job. */
export async function createRun(databaseUrl: string, parameters: ModelRunParameters, user: AuthenticatedUser, ip: string | null): Promise<ModelRunDto> {
  await validateRunRequest(parameters);
  const run = await knex().transaction((trx) => insertRun(trx, parameters, user, ip));
  await enqueueRun(databaseUrl, run.id);
  return toDto(await findRun(run.id));
}

/** Sends the run's job; if the queue cannot take it, the run is failed with the reason (never left queued silently). */
export async function enqueueRun(databaseUrl: string, runId: number): Promise<void> {
  try {
    const boss = await queueSender(databaseUrl);
    await ensureModelFitQueue(boss);
    const jobId = await boss.send(modelFitQueue(), { runId });
    if (!jobId) throw new Error('the queue refused the job');
    await ModelRun.query().patch({ job_id: jobId }).where({ id: runId }).whereNull('job_id');
    await knex().raw('SELECT pg_notify(?, ?)', [MODEL_FIT_CHANNEL, modelFitQueue()]);
  } catch (error) {
    await ModelRun.query()
      .patch({ status: 'failed', error: `Could not queue the fit: ${(error as Error).message}`, finished_at: new Date() })
      .where({ id: runId, status: 'queued' });
  }
}

export async function listRuns(filter: { lifecycle?: string; status?: string; estimator?: string; assetList?: string; limit: number }): Promise<ModelRunDto[]> {
  const q = ModelRun.query().orderBy('id', 'desc').limit(filter.limit);
  if (filter.lifecycle) q.where('lifecycle', filter.lifecycle);
  if (filter.status) q.where('status', filter.status);
  if (filter.estimator) q.where('estimator', filter.estimator);
  // The universe as the run was asked for: { kind: 'list', listId } (parameters are stored as given, validated).
  if (filter.assetList) q.whereRaw(`parameters->'universe'->>'kind' = 'list' AND parameters->'universe'->>'listId' = ?`, [String(Number(filter.assetList))]);
  return toDtos(await q);
}

export async function getRun(id: number): Promise<ModelRunDto> {
  return toDto(await findRun(id));
}

/**
 * Cancels a queued or running run. A queued run is cancelled at once (and its job withdrawn); a running one is
 * flagged and its worker stops the fit within about a second.
 */
export async function cancelRun(databaseUrl: string, id: number, user: AuthenticatedUser, ip: string | null): Promise<ModelRunDto> {
  const run = await knex().transaction(async (trx) => {
    const r = await ModelRun.query(trx).findById(id).forUpdate();
    if (!r) throw notFound(`Model run ${id} does not exist`);
    if (r.status !== 'queued' && r.status !== 'running') throw conflict(`Run ${r.label} has already ${r.status === 'succeeded' ? 'succeeded' : r.status}; only queued or running runs can be cancelled`);
    const reason = `Cancelled by ${user.name}`;
    const patch: Partial<ModelRun> = r.status === 'queued' ? { status: 'cancelled', error: reason, cancel_requested_at: new Date(), finished_at: new Date() } : { cancel_requested_at: new Date(), error: reason };
    await ModelRun.query(trx).patch(patch).where({ id });
    await recordAudit({ actor: user, action: 'model-run.cancelled', objectType: 'model_run', objectId: id, ip, details: { label: r.label, statusAtRequest: r.status } }, trx);
    return r;
  });
  if (run.status === 'queued' && run.job_id) {
    const boss = await queueSender(databaseUrl).catch(() => null);
    await boss?.cancel(modelFitQueue(), run.job_id).catch(() => undefined);
  }
  return getRun(id);
}

/** Approves a succeeded draft: never by the person who ran it (four eyes), always with a comment; audited. */
export async function approveRun(id: number, comment: string, user: AuthenticatedUser, ip: string | null): Promise<ModelRunDto> {
  await knex().transaction(async (trx) => {
    const run = await ModelRun.query(trx).findById(id).forUpdate();
    if (!run) throw notFound(`Model run ${id} does not exist`);
    if (run.created_by === user.id) throw forbidden(`You ran ${run.label}: a second analyst or an administrator must approve it`);
    if (run.status !== 'succeeded') throw conflict(`Run ${run.label} has not succeeded (status: ${run.status}); only a succeeded fit can be approved`);
    if (run.lifecycle !== 'draft') throw conflict(`Run ${run.label} is already ${run.lifecycle}`);
    await ModelRun.query(trx).patch({ lifecycle: 'approved', approved_by: user.id, approved_at: new Date(), approval_comment: comment }).where({ id });
    await recordAudit({ actor: user, action: 'model-run.approved', objectType: 'model_run', objectId: id, ip, details: { label: run.label, comment, createdBy: run.created_by } }, trx);
  });
  // Risk pages will ask for it next: load it and its comparison matrices in the background (this process only).
  void warmModel(id).catch(() => undefined);
  return getRun(id);
}

/** Retires an approved model (it stays readable; portfolio views stop choosing it by default); audited. */
export async function retireRun(id: number, comment: string, user: AuthenticatedUser, ip: string | null): Promise<ModelRunDto> {
  await knex().transaction(async (trx) => {
    const run = await ModelRun.query(trx).findById(id).forUpdate();
    if (!run) throw notFound(`Model run ${id} does not exist`);
    if (run.lifecycle !== 'approved') throw conflict(`Run ${run.label} is ${run.lifecycle}; only approved models can be retired`);
    await ModelRun.query(trx).patch({ lifecycle: 'retired', retired_by: user.id, retired_at: new Date(), retire_comment: comment }).where({ id });
    await recordAudit({ actor: user, action: 'model-run.retired', objectType: 'model_run', objectId: id, ip, details: { label: run.label, comment } }, trx);
  });
  return getRun(id);
}

function perAsset(stored: StoredModel) {
  const { model } = stored;
  const n = model.assets;
  const h = model.kind === 'factor' ? communalities(model) : null;
  const psi = model.kind === 'factor' ? model.specificVariance : Float64Array.from({ length: n }, (_, i) => model.covariance[i * n + i]);
  return { h, psi };
}

export async function getResults(id: number): Promise<ModelResults> {
  const run = await findRun(id);
  const stored = await loadModel(id);
  const { model, header, diagnostics } = stored;
  const { h, psi } = perAsset(stored);
  const meta: { id: number; name: string; sector: string | null }[] = await knex()('assets').select('id', 'name', 'sector').whereIn('id', stored.assetIds);
  const byId = new Map(meta.map((m) => [m.id, m]));
  const heywood = (diagnostics.heywood as boolean[] | undefined) ?? [];
  const annual = Math.sqrt(header.periodsPerYear);
  const assetRows = stored.symbols.map((symbol, i) => {
    const communality = h ? h[i] : null;
    const variance = (communality ?? 0) + psi[i];
    return {
      assetId: stored.assetIds[i],
      symbol,
      name: byId.get(stored.assetIds[i])?.name ?? null,
      sector: byId.get(stored.assetIds[i])?.sector ?? null,
      mean: model.mean[i],
      variance,
      communality,
      specificVariance: psi[i],
      specificVolatility: Math.sqrt(psi[i]) * annual,
      factorShare: communality === null ? null : variance > 0 ? communality / variance : null,
      heywood: heywood[i] ?? false,
    };
  });
  const row = await knex()('model_results').select('data_sha256', 'log_likelihood').where({ run_id: id }).first();
  return {
    run: await toDto(run),
    method: model.method,
    assets: header.assets,
    observations: header.observations,
    factors: header.factors,
    periodsPerYear: header.periodsPerYear,
    firstDate: header.firstDate,
    lastDate: header.lastDate,
    dataSha256: row.data_sha256,
    logLikelihood: row.log_likelihood,
    diagnostics,
    assetRows,
  };
}

export const ORIENTATION_NOTE =
  'Single loadings depend on the orientation: any rotation W → WR fits the data equally well. Canonical: WᵀΨ⁻¹W diagonal, columns by decreasing variance, each column’s largest loading positive. Varimax (Kaiser 1958) is an interpretation aid only. Communalities, specific variances and portfolio risk do not depend on the orientation.';

export async function getLoadings(id: number, orientation: 'canonical' | 'varimax') {
  const stored = await loadModel(id);
  if (stored.model.kind !== 'factor') throw conflict(`${stored.header.label} is a ${stored.model.method} covariance: it has no loadings`);
  const { assets: n, factors: l } = stored.model;
  const w = orientation === 'varimax' && l > 1 ? varimax(stored.model.loadings, n, l).loadings : stored.model.loadings;
  const rows: number[][] = [];
  for (let i = 0; i < n; i++) rows.push(Array.from(w.subarray(i * l, i * l + l)));
  return { orientation, note: ORIENTATION_NOTE, symbols: stored.symbols, factors: l, loadings: rows };
}

export async function getFactorScores(id: number) {
  const stored = await loadModel(id);
  if (!stored.factorScores || stored.model.kind !== 'factor') throw conflict(`${stored.header.label} is not a factor model: it has no factor scores`);
  const l = stored.model.factors;
  const scores: number[][] = [];
  for (let t = 0; t < stored.dates.length; t++) scores.push(Array.from(stored.factorScores.subarray(t * l, t * l + l)));
  return { dates: stored.dates, factors: l, scores, note: 'Posterior mean factor returns E[z | x] in the canonical orientation; single factors depend on the orientation.' };
}

/** Restricts a factor model to the given asset positions. */
function restrict(model: FactorModel, positions: number[]): FactorModel {
  const l = model.factors;
  const loadings = new Float64Array(positions.length * l);
  positions.forEach((p, i) => loadings.set(model.loadings.subarray(p * l, p * l + l), i * l));
  return { ...model, assets: positions.length, mean: Float64Array.from(positions, (p) => model.mean[p]), specificVariance: Float64Array.from(positions, (p) => model.specificVariance[p]), loadings };
}

/** Compares two versions on their common assets: principal angles between loading subspaces, per-asset changes. */
export async function compareRuns(firstId: number, secondId: number, user: AuthenticatedUser): Promise<ModelComparison> {
  const [a, b] = [await loadModel(firstId), await loadModel(secondId)];
  const posB = new Map(b.symbols.map((s, i) => [s, i]));
  const common = a.symbols.map((s, i) => [i, posB.get(s)] as const).filter((p): p is readonly [number, number] => p[1] !== undefined);
  const inB = new Set(a.symbols);
  const pa = perAsset(a);
  const pb = perAsset(b);
  let angles: number[] | null = null;
  if (a.model.kind === 'factor' && b.model.kind === 'factor' && common.length > Math.max(a.model.factors, b.model.factors)) {
    const ra = restrict(a.model, common.map((p) => p[0]));
    const rb = restrict(b.model, common.map((p) => p[1]));
    angles = Array.from(loadingSubspaceAngles(ra, rb), (x) => (x * 180) / Math.PI);
  }
  const annualA = Math.sqrt(a.header.periodsPerYear);
  const annualB = Math.sqrt(b.header.periodsPerYear);
  return {
    portfolios: await portfolioVolatilities(a, b, user),
    first: await getRun(firstId),
    second: await getRun(secondId),
    commonAssets: common.length,
    onlyInFirst: a.symbols.filter((s) => !posB.has(s)),
    onlyInSecond: b.symbols.filter((s) => !inB.has(s)),
    principalAnglesDegrees: angles,
    note:
      'Principal angles (Björck & Golub 1973) measure how far the spaces spanned by the two sets of loadings are apart: 0° is a shared direction, 90° an unrelated one. They do not depend on the orientation of either fit. Computed on the assets both models cover.',
    assets: common.map(([i, j]) => {
      const ca = pa.h ? pa.h[i] : null;
      const cb = pb.h ? pb.h[j] : null;
      const va = Math.sqrt(pa.psi[i]) * annualA;
      const vb = Math.sqrt(pb.psi[j]) * annualB;
      return {
        symbol: a.symbols[i],
        communalityFirst: ca,
        communalitySecond: cb,
        communalityChange: ca !== null && cb !== null ? cb - ca : null,
        specificVolFirst: va,
        specificVolSecond: vb,
        specificVolChange: vb - va,
      };
    }),
  };
}

/** Weights of a portfolio on a model's assets (holdings the model does not cover are left out and reported). */
function weightsOn(stored: StoredModel, holdings: { asset_id: number; weight: number }[]): { weights: Float64Array; covered: number } {
  const position = new Map(stored.assetIds.map((id, i) => [id, i]));
  const weights = new Float64Array(stored.assetIds.length);
  let covered = 0;
  for (const h of holdings) {
    const i = position.get(h.asset_id);
    if (i === undefined) continue;
    weights[i] += h.weight;
    covered += h.weight;
  }
  return { weights, covered };
}

/**
 * Annualised volatility of every portfolio the caller may read (a portfolio manager: their own) under both
 * versions, over the holdings each model covers (common practice: √(periods per year) annualisation).
 */
async function portfolioVolatilities(a: StoredModel, b: StoredModel, user: AuthenticatedUser): Promise<ModelComparison['portfolios']> {
  const hasPortfolios = await knex().schema.hasTable('portfolios');
  if (!hasPortfolios) return [];
  const q = knex()('portfolios').select('id', 'name', 'kind').orderBy('name');
  if (user.role === 'pm') q.where({ owner_id: user.id });
  const portfolios: { id: number; name: string; kind: string }[] = await q;
  if (!portfolios.length) return [];
  const holdings: { portfolio_id: number; asset_id: number; weight: number }[] = await knex()('portfolio_holdings').select('portfolio_id', 'asset_id', 'weight').whereIn('portfolio_id', portfolios.map((p) => p.id));
  const byPortfolio = new Map<number, { asset_id: number; weight: number }[]>();
  for (const h of holdings) byPortfolio.set(h.portfolio_id, [...(byPortfolio.get(h.portfolio_id) ?? []), h]);
  return portfolios.map((p) => {
    const own = byPortfolio.get(p.id) ?? [];
    const wa = weightsOn(a, own);
    const wb = weightsOn(b, own);
    const volA = wa.covered > 0 ? varianceBreakdown(a.model, wa.weights, a.header.periodsPerYear).annualisedVolatility : null;
    const volB = wb.covered > 0 ? varianceBreakdown(b.model, wb.weights, b.header.periodsPerYear).annualisedVolatility : null;
    return { id: p.id, name: p.name, kind: p.kind, holdings: own.length, coveredFirst: wa.covered, coveredSecond: wb.covered, volFirst: volA, volSecond: volB, volChange: volA !== null && volB !== null ? volB - volA : null };
  });
}
