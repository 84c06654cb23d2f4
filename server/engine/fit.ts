/**
 * One entry point for every estimator: fitModel(panel, options, control) → covariance model + diagnostics.
 * Factor models come back in canonical orientation (orientation.ts). Log-likelihoods are totals over observations at
 * the fitted mean and covariance (logLikelihood.ts conventions).
 */
import { fitFactorAnalysis } from './factorAnalysis';
import { denseOperator, topEigenpairs } from './linalg/eigen';
import { ledoitWolf } from './ledoitWolf';
import { modelLogLikelihood } from './logLikelihood';
import { fitWithMissing } from './missing';
import { fitPpca, topSpectrum } from './ppca';
import { sampleCovariance } from './sampleCovariance';
import { buildScatter, panelHasMissing } from './scatter';
import type { CovarianceModel, FitControl, MeanHandling, ReturnsPanel, Weighting } from './types';
import { describeWeighting, type WeightingSummary } from './weights';

export type FitMethod = 'fa' | 'ppca' | 'sample' | 'ledoit-wolf';

/**
 * Missing values: 'em' (factor models: EM over the observed entries, missing.ts), 'pairwise' (dense estimators:
 * pairwise-complete, repaired to PSD), 'drop-incomplete' (keep only complete dates), 'reject' (error).
 * Default: 'em' for fa/ppca, 'pairwise' for sample/ledoit-wolf.
 */
export type MissingPolicy = 'em' | 'pairwise' | 'drop-incomplete' | 'reject';

export interface FitOptions {
  method: FitMethod;
  /** L, required for fa and ppca. */
  factors?: number;
  weighting?: Weighting;
  mean?: MeanHandling;
  missing?: MissingPolicy;
  /** How many top eigenvalues of S to report (default max(L + 5, 10), at most N). */
  spectrumSize?: number;
  /** FA/EM relative log-likelihood tolerance per SQUAREM cycle (default 1e-12). */
  tolerance?: number;
  /** FA/EM: largest relative change of any Ψᵢ in an EM step at convergence (default 1e-7). */
  parameterTolerance?: number;
  maxEvaluations?: number;
  /** FA: Ψᵢ ≥ floorShare · Sᵢᵢ (default 0.005). */
  floorShare?: number;
  /** FA algorithm: 'profile' (default, Jöreskog 1967 with exact loadings) or 'em' (EM + SQUAREM). */
  algorithm?: 'profile' | 'em';
  /** FA warm start (e.g. the previous window), N × L loadings and N specific variances. */
  start?: { loadings: Float64Array; specificVariance: Float64Array };
  /** Compute the model's log-likelihood on the panel for dense estimators (default true; O(N³)). */
  denseLogLikelihood?: boolean;
}

export interface FitDiagnostics {
  method: FitMethod;
  factors: number;
  observations: number;
  assets: number;
  iterations: number;
  /** Step evaluations: EM steps (one application of S each) or FA profile steps (one warm-started top-L
   * eigensolve each); 0 for closed forms. */
  evaluations: number;
  converged: boolean;
  /** Total log-likelihood at the fitted mean and covariance; null when Σ is singular. */
  logLikelihood: number | null;
  /** Log-likelihood after each iteration (iterative fits), else [logLikelihood]. */
  trace: number[];
  /** Per asset: specific variance held at its floor (Heywood case). */
  heywood: boolean[];
  /** Top eigenvalues, decreasing: of the 1/T scatter for complete-data factor models, of the estimated covariance for
   * sample and Ledoit–Wolf; empty for missing-data EM fits. */
  spectrum: number[];
  effectiveSampleSize: number;
  weighting: WeightingSummary;
  mean: MeanHandling;
  missingPolicy: MissingPolicy | 'none';
  missingEntries: number;
  incompleteDates: number;
  /** PPCA σ². */
  noiseVariance?: number;
  /** Ledoit–Wolf δ. */
  shrinkage?: number;
  /** Plain-language cautions, e.g. 'pairwise-covariance-repaired-to-psd'. */
  flags: string[];
}

export interface FitResult {
  model: CovarianceModel;
  diagnostics: FitDiagnostics;
}

function checkPanel(panel: ReturnsPanel): void {
  const { observations: t, assets: n, values } = panel;
  if (!(Number.isInteger(n) && n >= 1)) throw new Error(`panel must have at least one asset, got ${n}`);
  if (!(Number.isInteger(t) && t >= 2)) throw new Error(`panel must have at least 2 observations, got ${t}`);
  if (values.length !== t * n) throw new Error(`panel has ${values.length} values, expected ${t} × ${n} = ${t * n}`);
  for (let k = 0; k < values.length; k++) {
    const v = values[k];
    if (!Number.isNaN(v) && !Number.isFinite(v)) throw new Error(`panel value at row ${Math.floor(k / n) + 1}, asset ${(k % n) + 1} is infinite`);
  }
}

/** The dates (rows) on which every asset is observed. */
export function completeRows(panel: ReturnsPanel): ReturnsPanel {
  const { values, observations: t, assets: n } = panel;
  const rows: number[] = [];
  for (let r = 0; r < t; r++) {
    let ok = true;
    for (let i = 0; i < n && ok; i++) if (Number.isNaN(values[r * n + i])) ok = false;
    if (ok) rows.push(r);
  }
  const out = new Float64Array(rows.length * n);
  rows.forEach((r, k) => out.set(values.subarray(r * n, (r + 1) * n), k * n));
  return { values: out, observations: rows.length, assets: n };
}

function dropIncomplete(panel: ReturnsPanel): ReturnsPanel {
  const complete = completeRows(panel);
  if (complete.observations < 2) throw new Error(`only ${complete.observations} dates have every asset observed: too few after dropping incomplete dates`);
  return complete;
}

export function fitModel(input: ReturnsPanel, options: FitOptions, control: FitControl = {}): FitResult {
  checkPanel(input);
  const method = options.method;
  const meanHandling = options.mean ?? 'sample';
  const isFactor = method === 'fa' || method === 'ppca';
  const l = isFactor ? options.factors : 0;
  const n = input.assets;
  if (isFactor) {
    if (l === undefined || !Number.isInteger(l) || l < 0) throw new Error(`factors must be a non-negative integer for method ${method}`);
    if (l >= n) throw new Error(`factors (${l}) must be smaller than the number of assets (${n})`);
  }
  const factors = l ?? 0;
  const flags: string[] = [];
  const hasMissing = panelHasMissing(input);
  let policy: MissingPolicy | 'none' = 'none';
  let panel = input;
  let missingEntries = 0;
  let incompleteDates = 0;
  if (hasMissing) {
    policy = options.missing ?? (isFactor ? 'em' : 'pairwise');
    for (let r = 0; r < input.observations; r++) {
      let inc = false;
      for (let i = 0; i < n; i++) if (Number.isNaN(input.values[r * n + i])) {
        missingEntries++;
        inc = true;
      }
      if (inc) incompleteDates++;
    }
    if (policy === 'reject') throw new Error(`panel has ${missingEntries} missing values on ${incompleteDates} dates`);
    if (policy === 'em' && !isFactor) throw new Error(`missing policy 'em' applies to fa and ppca; use 'pairwise' or 'drop-incomplete' for ${method}`);
    if (policy === 'pairwise' && isFactor) throw new Error(`missing policy 'pairwise' applies to sample and ledoit-wolf; use 'em' or 'drop-incomplete' for ${method}`);
    if (policy === 'drop-incomplete') {
      panel = dropIncomplete(input);
      flags.push(`dropped-incomplete-dates:${incompleteDates}`);
    } else flags.push(policy === 'em' ? 'missing-data-em' : 'pairwise-complete-covariance');
  }
  const t = panel.observations;
  if (t < n) flags.push('fewer-observations-than-assets');
  const weighting = describeWeighting(t, options.weighting);
  const spectrumSize = Math.min(n, options.spectrumSize ?? Math.max(factors + 5, 10));
  const base = {
    method,
    factors,
    observations: t,
    assets: n,
    weighting,
    mean: meanHandling,
    missingPolicy: policy,
    missingEntries,
    incompleteDates,
    effectiveSampleSize: weighting.effectiveSampleSize,
  };

  if (isFactor && policy === 'em') {
    const r = fitWithMissing(panel, { method, factors, weighting: options.weighting, mean: meanHandling, tolerance: options.tolerance, parameterTolerance: options.parameterTolerance, maxEvaluations: options.maxEvaluations, floorShare: options.floorShare }, control);
    const model: CovarianceModel = { kind: 'factor', method, assets: n, factors, mean: r.mean, loadings: r.loadings, specificVariance: r.specificVariance };
    const heyCount = r.heywood.filter(Boolean).length;
    if (heyCount > 0 && method === 'fa') flags.push(`heywood-cases:${heyCount}`);
    if (!r.converged) flags.push('not-converged');
    const logLikelihood = modelLogLikelihood(model, panel);
    return {
      model,
      diagnostics: {
        ...base,
        iterations: r.iterations,
        evaluations: r.evaluations,
        converged: r.converged,
        logLikelihood,
        trace: r.trace,
        heywood: method === 'fa' ? r.heywood : new Array(n).fill(false),
        spectrum: [],
        noiseVariance: method === 'ppca' ? r.specificVariance[0] : undefined,
        flags,
      },
    };
  }

  if (isFactor) {
    const scatter = buildScatter(panel, { weighting: options.weighting, mean: meanHandling, form: method === 'ppca' ? 'data' : 'auto', blockWidth: factors });
    if (method === 'ppca') {
      const ppca = fitPpca(scatter, factors, spectrumSize);
      const spectrum = Array.from(ppca.spectrum);
      const psi = new Float64Array(n).fill(ppca.noiseVariance);
      const model: CovarianceModel = { kind: 'factor', method, assets: n, factors, mean: scatter.mean, loadings: ppca.loadings, specificVariance: psi };
      return {
        model,
        diagnostics: { ...base, iterations: 0, evaluations: 0, converged: true, logLikelihood: ppca.logLikelihood, trace: [ppca.logLikelihood], heywood: new Array(n).fill(false), spectrum, noiseVariance: ppca.noiseVariance, flags },
      };
    }
    // Diagnostics only: a loose residual tolerance still gives eigenvalues to about 1e-8 (errors are quadratic).
    const spectrum = Array.from(topSpectrum(scatter, spectrumSize, 1e-4, true).values);
    const start = options.start;
    const fa = fitFactorAnalysis(scatter, factors, { algorithm: options.algorithm, tolerance: options.tolerance, parameterTolerance: options.parameterTolerance, maxEvaluations: options.maxEvaluations, floorShare: options.floorShare, start }, control);
    const model: CovarianceModel = { kind: 'factor', method, assets: n, factors, mean: scatter.mean, loadings: fa.loadings, specificVariance: fa.specificVariance };
    const heyCount = fa.heywood.filter(Boolean).length;
    if (heyCount > 0) flags.push(`heywood-cases:${heyCount}`);
    if (!fa.converged) flags.push('not-converged');
    return {
      model,
      diagnostics: { ...base, iterations: fa.iterations, evaluations: fa.evaluations, converged: fa.converged, logLikelihood: fa.logLikelihood, trace: fa.trace, heywood: fa.heywood, spectrum, flags },
    };
  }

  // Dense estimators.
  let covariance: Float64Array;
  let mean: Float64Array;
  let shrinkage: number | undefined;
  if (method === 'sample') {
    const r = sampleCovariance(panel, { weighting: options.weighting, mean: meanHandling });
    covariance = r.covariance;
    mean = r.mean;
    if (r.repairedToPsd) flags.push('pairwise-covariance-repaired-to-psd');
  } else if (method === 'ledoit-wolf') {
    const r = ledoitWolf(panel, { weighting: options.weighting, mean: meanHandling });
    covariance = r.covariance;
    mean = r.mean;
    shrinkage = r.shrinkage;
    if (r.repairedToPsd) flags.push('pairwise-covariance-repaired-to-psd');
  } else {
    throw new Error(`unknown method '${method as string}': use fa, ppca, sample or ledoit-wolf`);
  }
  const model: CovarianceModel = { kind: 'dense', method, assets: n, mean, covariance };
  let logLikelihood: number | null = null;
  if (options.denseLogLikelihood ?? true) {
    const ll = modelLogLikelihood(model, panel);
    logLikelihood = Number.isFinite(ll) ? ll : null;
    if (logLikelihood === null) flags.push('singular-covariance');
  }
  const spec = topEigenpairs(denseOperator(covariance, n), spectrumSize, { tolerance: 1e-9 });
  return {
    model,
    diagnostics: { ...base, iterations: 0, evaluations: 0, converged: true, logLikelihood, trace: logLikelihood === null ? [] : [logLikelihood], heywood: new Array(n).fill(false), spectrum: Array.from(spec.values), shrinkage, flags },
  };
}
