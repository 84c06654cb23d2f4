/**
 * Stored models: read and write fitted models in PostgreSQL (tables model_runs, model_results).
 *
 * For other features (portfolio risk, compliance, backtests) the entry points are:
 *
 *   loadModel(runId: number, trx?): Promise<StoredModel>
 *       the fitted model of one succeeded run (any lifecycle); throws HttpError 404 when the run does not exist,
 *       409 when it has no result (still queued/running, failed, cancelled).
 *   latestApprovedModel(filter?: { estimator?: 'fa'|'ppca'|'sample'|'ledoit-wolf' }, trx?): Promise<StoredModel | null>
 *       the most recently approved (not retired) model, optionally of one estimator; null when none is approved.
 *   approvedModels(trx?): Promise<StoredModelHeader[]>   every approved model's header, newest approval first
 *       (for a "model version" picker).
 *
 *   StoredModel = {
 *     header: StoredModelHeader  — { runId, label, estimator, lifecycle, approvedAt, approvedBy (name), createdAt,
 *                                    firstDate, lastDate, assets N, observations T, factors L, periodsPerYear }
 *     model: FactorModel | DenseCovarianceModel   — the engine's types (server/engine/types.ts); arrays follow `symbols`
 *     symbols: string[]       — asset symbols in the model's order (index i of mean/loadings/specificVariance/covariance)
 *     assetIds: number[]      — assets.id in the same order
 *     dates: string[]         — ISO dates of the estimation window (T), the rows of factorScores
 *     factorScores: Float64Array | null  — T × L posterior mean factor returns (factor models), row-major
 *     diagnostics: ModelDiagnostics      — log-likelihood trace, converged, Heywood flags, spectrum, criteria …
 *   }
 *
 * Numeric arrays are bytea holding little-endian IEEE 754 doubles (see the migration 20261202020100_model_runs.ts).
 */
import { createHash } from 'node:crypto';
import type { Knex } from 'knex';
import type { DenseCovarianceModel, FactorModel } from '../engine/types';
import { ModelResult } from '../models/ModelResult';
import { ModelRun } from '../models/ModelRun';
import { User } from '../models/User';
import { conflict, notFound } from '../http/errors';
import type { Estimator, ModelDiagnostics } from '../../shared/schemas/modelRuns';
import type { LoadedPanel } from './modelPanel';
import type { FitComputation } from '../worker/fitCompute';

const littleEndianHost = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;

/** Float64Array → bytea (little-endian doubles). */
export function encodeDoubles(values: ArrayLike<number>): Buffer {
  const array = values instanceof Float64Array ? values : Float64Array.from(values);
  if (littleEndianHost) return Buffer.from(array.buffer, array.byteOffset, array.byteLength);
  const out = Buffer.alloc(array.length * 8);
  for (let i = 0; i < array.length; i++) out.writeDoubleLE(array[i], i * 8);
  return out;
}

/** bytea (little-endian doubles) → Float64Array (a copy: Buffers from pg are not 8-byte aligned). */
export function decodeDoubles(buffer: Buffer): Float64Array {
  if (buffer.length % 8 !== 0) throw new Error('stored array is not a whole number of doubles');
  const out = new Float64Array(buffer.length / 8);
  if (littleEndianHost) new Uint8Array(out.buffer).set(buffer);
  else for (let i = 0; i < out.length; i++) out[i] = buffer.readDoubleLE(i * 8);
  return out;
}

/** SHA-256 of the panel values exactly as fitted (row-major T × N doubles, NaN = missing), little-endian. */
export function panelSha256(values: Float64Array): string {
  return createHash('sha256').update(encodeDoubles(values)).digest('hex');
}

export interface StoredModelHeader {
  runId: number;
  label: string;
  estimator: Estimator;
  lifecycle: 'draft' | 'approved' | 'retired';
  approvedAt: string | null;
  approvedBy: string | null;
  createdAt: string;
  firstDate: string;
  lastDate: string;
  assets: number;
  observations: number;
  factors: number;
  periodsPerYear: number;
}

export interface StoredModel {
  header: StoredModelHeader;
  model: FactorModel | DenseCovarianceModel;
  symbols: string[];
  assetIds: number[];
  dates: string[];
  factorScores: Float64Array | null;
  diagnostics: ModelDiagnostics;
}

/** What the worker (or the demo seed) stores for a succeeded run. */
export interface ModelResultInput {
  model: FactorModel | DenseCovarianceModel;
  assetIds: number[];
  symbols: string[];
  dates: string[];
  dataSha256: string;
  periodsPerYear: number;
  factorScores: Float64Array | null;
  logLikelihood: number | null;
  diagnostics: ModelDiagnostics;
}

/** The stored form of a fit of a loaded panel: one builder for every path that stores a run (worker, demo seed, tests, bench). */
export function resultOfFit(panel: LoadedPanel, fit: FitComputation, extraDiagnostics: Partial<ModelDiagnostics> = {}, dataSha256 = panelSha256(panel.values)): ModelResultInput {
  return {
    model: fit.model,
    assetIds: panel.assetIds,
    symbols: panel.symbols,
    dates: panel.dates,
    dataSha256,
    periodsPerYear: panel.periodsPerYear,
    factorScores: fit.factorScores,
    logLikelihood: fit.logLikelihood,
    diagnostics: { ...fit.diagnostics, ...extraDiagnostics },
  };
}

/** Inserts the result row (call inside the transaction that marks the run succeeded). */
export async function insertModelResult(trx: Knex.Transaction, runId: number, input: ModelResultInput): Promise<void> {
  const { model } = input;
  const n = model.assets;
  if (input.assetIds.length !== n || input.symbols.length !== n) throw new Error('asset ids and symbols must follow the model order');
  await trx('model_results').insert({
    run_id: runId,
    method: model.method,
    assets: n,
    observations: input.dates.length,
    factors: model.kind === 'factor' ? model.factors : 0,
    periods_per_year: input.periodsPerYear,
    asset_ids: input.assetIds,
    asset_symbols: input.symbols,
    dates: input.dates,
    data_sha256: input.dataSha256,
    mean: encodeDoubles(model.mean),
    loadings: model.kind === 'factor' ? encodeDoubles(model.loadings) : null,
    specific_variance: model.kind === 'factor' ? encodeDoubles(model.specificVariance) : null,
    covariance: model.kind === 'dense' ? encodeDoubles(model.covariance) : null,
    factor_scores: input.factorScores ? encodeDoubles(input.factorScores) : null,
    log_likelihood: Number.isFinite(input.logLikelihood ?? NaN) ? input.logLikelihood : null,
    diagnostics: JSON.stringify(sanitiseJson(input.diagnostics)),
  });
}

/** JSON has no NaN or Infinity: store them as null. */
function sanitiseJson(value: unknown): unknown {
  if (typeof value === 'number') return Number.isFinite(value) ? value : null;
  if (Array.isArray(value)) return value.map(sanitiseJson);
  if (ArrayBuffer.isView(value)) return Array.from(value as unknown as ArrayLike<number>, (v) => sanitiseJson(v));
  if (value && typeof value === 'object') return Object.fromEntries(Object.entries(value).map(([k, v]) => [k, sanitiseJson(v)]));
  return value;
}

const iso = (d: Date | string | null) => (d === null ? null : d instanceof Date ? d.toISOString() : String(d));

async function headerOf(run: ModelRun, result: { assets: number; observations: number; factors: number; periods_per_year: number; first_date: string; last_date: string }, trx?: Knex.Transaction): Promise<StoredModelHeader> {
  const approver = run.approved_by ? await User.query(trx).findById(run.approved_by) : null;
  return {
    runId: run.id,
    label: run.label,
    estimator: run.estimator,
    lifecycle: run.lifecycle,
    approvedAt: iso(run.approved_at),
    approvedBy: approver?.name ?? null,
    createdAt: iso(run.created_at)!,
    firstDate: result.first_date,
    lastDate: result.last_date,
    assets: result.assets,
    observations: result.observations,
    factors: result.factors,
    periodsPerYear: result.periods_per_year,
  };
}

/** The fitted model of one succeeded run, with its asset symbols (see the comment at the top of this file). */
export async function loadModel(runId: number, trx?: Knex.Transaction): Promise<StoredModel> {
  const run = await ModelRun.query(trx).findById(runId);
  if (!run) throw notFound(`Model run ${runId} does not exist`);
  const db = trx ?? ModelResult.knex();
  const row = await db('model_results')
    .select('*', db.raw('dates::text[] AS dates'), db.raw('dates[1]::text AS first_date'), db.raw('dates[array_upper(dates, 1)]::text AS last_date'))
    .where({ run_id: runId })
    .first();
  if (!row) throw conflict(`Model run ${run.label} has no stored model (status: ${run.status})`);
  const n = row.assets as number;
  const mean = decodeDoubles(row.mean);
  let model: FactorModel | DenseCovarianceModel;
  if (row.method === 'fa' || row.method === 'ppca') {
    model = { kind: 'factor', method: row.method, assets: n, factors: row.factors, mean, loadings: decodeDoubles(row.loadings), specificVariance: decodeDoubles(row.specific_variance) };
  } else {
    model = { kind: 'dense', method: row.method, assets: n, mean, covariance: decodeDoubles(row.covariance) };
  }
  return {
    header: await headerOf(run, row, trx),
    model,
    symbols: row.asset_symbols,
    assetIds: row.asset_ids,
    dates: row.dates,
    factorScores: row.factor_scores ? decodeDoubles(row.factor_scores) : null,
    diagnostics: row.diagnostics as ModelDiagnostics,
  };
}

function approvedQuery(trx: Knex.Transaction | undefined, estimator?: Estimator) {
  const q = ModelRun.query(trx).where({ lifecycle: 'approved', status: 'succeeded' }).orderBy('approved_at', 'desc').orderBy('id', 'desc');
  if (estimator) q.where({ estimator });
  return q;
}

/** The most recently approved, not retired model (optionally of one estimator), or null. */
export async function latestApprovedModel(filter: { estimator?: Estimator } = {}, trx?: Knex.Transaction): Promise<StoredModel | null> {
  const run = await approvedQuery(trx, filter.estimator).first();
  return run ? loadModel(run.id, trx) : null;
}

/** Headers of every approved model, newest approval first (no arrays loaded). */
export async function approvedModels(trx?: Knex.Transaction): Promise<StoredModelHeader[]> {
  const runs = await approvedQuery(trx);
  if (!runs.length) return [];
  const db = trx ?? ModelResult.knex();
  const rows = await db('model_results')
    .select('run_id', 'assets', 'observations', 'factors', 'periods_per_year', db.raw('dates[1]::text AS first_date'), db.raw('dates[array_upper(dates, 1)]::text AS last_date'))
    .whereIn('run_id', runs.map((r) => r.id));
  const byRun = new Map(rows.map((r: { run_id: number }) => [r.run_id, r]));
  const out: StoredModelHeader[] = [];
  for (const run of runs) {
    const row = byRun.get(run.id);
    if (row) out.push(await headerOf(run, row as never, trx));
  }
  return out;
}
