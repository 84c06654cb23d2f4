/**
 * The computation of one model run: a panel and the run's parameters in, the fitted model and its diagnostics out.
 * Pure (no I/O): the fit thread (fitThreadMain.ts) and the demo seed call it. The estimation is the engine's
 * fitModel (server/engine/fit.ts); the number of factors, when asked to recommend, is the engine's chooseFactorCount.
 */
import type { CovarianceModel, FitProgress, ReturnsPanel, Weighting } from '../engine/types';
import { completeRows, fitModel, type MissingPolicy } from '../engine/fit';
import { chooseFactorCount, marchenkoPasturEdge } from '../engine/factorCount';
import { panelHasMissing } from '../engine/scatter';
import { sampleCovariance } from '../engine/sampleCovariance';
import { denseOperator, topEigenpairs } from '../engine/linalg/eigen';
import { factorScores } from '../engine/scores';
import { communalities } from '../engine/rotation';
import type { ModelDiagnostics, ModelRunParameters } from '../../shared/schemas/modelRuns';

export interface FitComputation {
  model: CovarianceModel;
  factorScores: Float64Array | null;
  logLikelihood: number | null;
  diagnostics: ModelDiagnostics;
  /** Seconds spent in the engine (factor count, fit, factor scores). */
  engineSeconds: number;
}

/** Largest L the recommendation searches (each L costs one FA fit, plus one per held-out block). */
export const RECOMMEND_MAX_FACTORS = 10;
/** Largest N × T for which the recommendation also scores held-out time blocks. */
export const HELD_OUT_MAX_CELLS = 200_000;
/** How many eigenvalues the scree plot shows. */
const SPECTRUM_SIZE = 20;

/** Stage names for the progress bar, in order, with the share of the work done when each starts. */
export const STAGES: Record<string, { label: string; from: number; to: number }> = {
  'factor-count': { label: 'choosing the number of factors', from: 0.05, to: 0.45 },
  'factor-analysis': { label: 'factor analysis (EM)', from: 0.45, to: 0.9 },
  'factor-analysis-missing': { label: 'factor analysis with missing data (EM)', from: 0.45, to: 0.9 },
  'ppca-missing': { label: 'probabilistic PCA with missing data (EM)', from: 0.45, to: 0.9 },
  fit: { label: 'fitting', from: 0.1, to: 0.85 },
  'factor scores': { label: 'factor scores', from: 0.9, to: 0.95 },
};



/** Weighted trace of the 1/T covariance over observed entries (for the bulk variance when no factor-count table ran). */
function observedTrace(panel: ReturnsPanel, mean: Float64Array): number {
  const { values, observations: t, assets: n } = panel;
  const sums = new Float64Array(n);
  const counts = new Float64Array(n);
  for (let r = 0; r < t; r++) {
    for (let i = 0; i < n; i++) {
      const v = values[r * n + i];
      if (Number.isNaN(v)) continue;
      sums[i] += (v - mean[i]) ** 2;
      counts[i]++;
    }
  }
  let trace = 0;
  for (let i = 0; i < n; i++) trace += counts[i] > 0 ? sums[i] / counts[i] : 0;
  return trace;
}

/** Fits the run. `onProgress` may throw to stop (cancellation). */
export function computeModelRun(panel: ReturnsPanel, parameters: ModelRunParameters, onProgress: (p: FitProgress) => void = () => {}): FitComputation {
  const started = performance.now();
  const { assets: n } = panel;
  const weighting: Weighting = parameters.weighting.kind === 'exponential' ? { kind: 'exponential', halfLife: parameters.weighting.halfLife } : { kind: 'equal' };
  const isFactor = parameters.estimator === 'fa' || parameters.estimator === 'ppca';
  const hasMissing = panelHasMissing(panel);
  const control = { onProgress };

  let factors = 0;
  let recommendation: Pick<ModelDiagnostics, 'criteria' | 'recommendedFactors' | 'recommendationReason'> & { edge?: number; bulk?: number; eigenvalues?: number[] } = {
    criteria: null,
    recommendedFactors: null,
    recommendationReason: null,
  };
  if (isFactor) {
    if (parameters.factors === 'recommend') {
      onProgress({ stage: 'factor-count', iteration: 0 });
      const complete = hasMissing ? completeRows(panel) : panel;
      const maxFactors = Math.min(RECOMMEND_MAX_FACTORS, n - 1);
      if (complete.observations < Math.max(30, maxFactors + 2)) {
        throw new Error(`Choosing the number of factors needs dates on which every asset is observed: only ${complete.observations} such dates; give the number of factors instead`);
      }
      // Held-out scoring refits every L on 5 training sets (6× the work): used up to HELD_OUT_MAX_CELLS, else BIC decides.
      const feasibleBlocks = complete.observations - Math.floor(complete.observations / 5) >= n / 4 + 2 && n * complete.observations <= HELD_OUT_MAX_CELLS ? 5 : 0;
      const count = chooseFactorCount(complete, { maxFactors, mean: parameters.mean, heldOutBlocks: feasibleBlocks, tolerance: 1e-8 }, { onProgress: (p) => onProgress({ ...p, stage: 'factor-count' }) });
      factors = count.recommended;
      recommendation = {
        criteria: count.rows.map((r) => ({
          factors: r.factors,
          logLikelihood: r.logLikelihood,
          aic: r.aic,
          bic: r.bic,
          extra: { parameters: r.parameters, baiNgIcp2: r.baiNgIcp2, eigenvalueRatio: Number.isFinite(r.eigenvalueRatio) ? r.eigenvalueRatio : null, heldOutLogLikelihood: r.heldOutLogLikelihood },
        })),
        recommendedFactors: count.recommended,
        recommendationReason: count.reason + (hasMissing ? ` (criteria computed on the ${complete.observations} dates with every asset observed)` : ''),
        edge: count.marchenkoPasturEdge,
        bulk: count.bulkVariance,
        eigenvalues: count.eigenvalues,
      };
    } else {
      factors = parameters.factors ?? 1;
    }
  }

  const engineMissing: MissingPolicy = isFactor ? 'em' : 'pairwise';
  onProgress({ stage: 'fit', iteration: 0 });
  const fit = fitModel(panel, { method: parameters.estimator, factors: isFactor ? factors : undefined, weighting, mean: parameters.mean, missing: engineMissing, spectrumSize: Math.min(n, SPECTRUM_SIZE) }, control);
  const { model, diagnostics: d } = fit;

  let scores: Float64Array | null = null;
  let factorVariance: number | null = null;
  let totalVariance = 0;
  if (model.kind === 'factor') {
    onProgress({ stage: 'factor scores', iteration: d.iterations, logLikelihood: d.logLikelihood ?? undefined });
    scores = factorScores(model, panel).scores;
    const h = communalities(model);
    factorVariance = 0;
    for (let i = 0; i < n; i++) {
      factorVariance += h[i];
      totalVariance += h[i] + model.specificVariance[i];
    }
  } else {
    for (let i = 0; i < n; i++) totalVariance += model.covariance[i * n + i];
  }
  let eigenvalues = d.spectrum.length ? d.spectrum : (recommendation.eigenvalues ?? []);
  let spectrumSource: string | null = null;
  let spectrumTrace: number | null = null;
  let spectrumObservations = d.effectiveSampleSize;
  if (!eigenvalues.length && hasMissing) {
    // EM fits have no sample spectrum of their own: read it from the pairwise-complete sample covariance over every
    // date (each pair of assets on the dates both are observed; not repaired to PSD, only its top eigenvalues are
    // read), so the scree plot and the Marchenko–Pastur edge see the whole window, and say so.
    const pairwise = sampleCovariance(panel, { weighting, mean: parameters.mean, divisor: 'ml', repair: false });
    const k = Math.min(n, SPECTRUM_SIZE);
    const top = topEigenpairs(denseOperator(pairwise.covariance, n), k, { tolerance: 1e-10 });
    eigenvalues = Array.from(top.values.subarray(0, k), (v) => Math.max(v, 0));
    let trace = 0;
    for (let i = 0; i < n; i++) trace += pairwise.covariance[i * n + i];
    spectrumTrace = trace;
    spectrumObservations = pairwise.effectiveSampleSize;
    spectrumSource = `Spectrum of the pairwise-complete sample covariance over all ${panel.observations} dates (each pair of assets on the dates both are observed); the fit itself used every observed value by EM.`;
  }
  let edge = recommendation.edge ?? null;
  let bulk = recommendation.bulk ?? null;
  if (edge === null && eigenvalues.length) {
    const mp = marchenkoPasturEdge(eigenvalues, spectrumTrace ?? (hasMissing ? observedTrace(panel, model.mean) : totalTraceOfScatter(model, totalVariance)), n, spectrumObservations);
    edge = mp.edge;
    bulk = mp.bulkVariance;
  }
  const { edge: _e, bulk: _b, eigenvalues: _ev, ...criteria } = recommendation;
  void _e;
  void _b;
  void _ev;
  return {
    model,
    factorScores: scores,
    logLikelihood: d.logLikelihood,
    engineSeconds: (performance.now() - started) / 1000,
    diagnostics: {
      logLikelihoodTrace: d.trace,
      iterations: d.iterations,
      evaluations: d.evaluations,
      converged: d.converged,
      heywood: d.heywood,
      eigenvalues,
      spectrumSource,
      marchenkoPasturEdge: edge,
      bulkVariance: bulk,
      noiseVariance: d.noiseVariance ?? null,
      effectiveSampleSize: d.effectiveSampleSize,
      decayFactor: d.weighting.kind === 'exponential' ? d.weighting.decay : null,
      halfLife: d.weighting.halfLife,
      totalVariance,
      factorVariance,
      explainedShare: factorVariance !== null && totalVariance > 0 ? factorVariance / totalVariance : null,
      ...criteria,
      missingMethod: d.missingPolicy === 'none' ? 'none (complete panel)' : d.missingPolicy === 'em' ? 'EM over the observed entries' : 'pairwise-complete covariance',
      missingEntries: d.missingEntries,
      incompleteDates: d.incompleteDates,
      shrinkage: d.shrinkage ?? null,
      flags: d.flags,
    },
  };
}

/**
 * tr S for the edge: for the sample covariance and the fitted models tr Σ̂ ≈ tr S (FA reproduces the diagonal of S
 * exactly at the optimum; PPCA its trace; the sample covariance is S). Ledoit–Wolf keeps tr S too (shrinkage to μI).
 */
function totalTraceOfScatter(_model: CovarianceModel, totalVariance: number): number {
  return totalVariance;
}
