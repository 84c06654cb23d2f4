/**
 * The computation of one model run: a panel and the run's parameters in, the fitted model and its diagnostics out.
 * Pure (no I/O): the fit thread (fitThreadMain.ts) and the demo seed call it.
 */
import type { CovarianceModel, FactorModel, FitProgress, ReturnsPanel, Weighting } from '../engine/types';
import { buildScatter, panelHasMissing } from '../engine/scatter';
import { fitFactorAnalysis } from '../engine/factorAnalysis';
import { fitPpca, topSpectrum } from '../engine/ppca';
import { sampleCovariance } from '../engine/sampleCovariance';
import { ledoitWolf } from '../engine/ledoitWolf';
import { factorScores } from '../engine/scores';
import { modelLogLikelihood } from '../engine/logLikelihood';
import { describeWeighting } from '../engine/weights';
import { communalities } from '../engine/rotation';
import type { ModelDiagnostics, ModelRunParameters } from '../../shared/schemas/modelRuns';
import { MAX_FACTORS } from '../../shared/schemas/modelRuns';

export interface FitComputation {
  model: CovarianceModel;
  factorScores: Float64Array | null;
  logLikelihood: number | null;
  diagnostics: ModelDiagnostics;
  /** Seconds spent in the engine proper (fit, spectrum, scores). */
  engineSeconds: number;
}

/** How many eigenvalues the scree plot shows. */
const SPECTRUM_SIZE = 20;

/** Fits the run. `onProgress` may throw to stop (cancellation). */
export function computeModelRun(panel: ReturnsPanel, parameters: ModelRunParameters, onProgress: (p: FitProgress) => void = () => {}): FitComputation {
  const started = performance.now();
  const { assets: n, observations: t } = panel;
  const weighting: Weighting = parameters.weighting.kind === 'exponential' ? { kind: 'exponential', halfLife: parameters.weighting.halfLife } : { kind: 'equal' };
  const options = { weighting, mean: parameters.mean } as const;
  const weightingSummary = describeWeighting(t, weighting);
  const hasMissing = panelHasMissing(panel);
  let missingMethod = 'none (complete panel)';

  const estimator = parameters.estimator;
  const common: ModelDiagnostics = {
    effectiveSampleSize: weightingSummary.effectiveSampleSize,
    decayFactor: weighting.kind === 'exponential' ? weightingSummary.decay : null,
  };

  if (estimator === 'sample' || estimator === 'ledoit-wolf') {
    onProgress({ stage: estimator === 'sample' ? 'sample covariance' : 'Ledoit–Wolf shrinkage', iteration: 0 });
    let model: CovarianceModel;
    const extra: Record<string, unknown> = {};
    if (estimator === 'sample') {
      const s = sampleCovariance(panel, options);
      model = { kind: 'dense', method: 'sample', assets: n, mean: s.mean, covariance: s.covariance };
      if (s.pairwise) missingMethod = s.repairedToPsd ? 'pairwise-complete, repaired to the nearest PSD matrix (Higham 2002)' : 'pairwise-complete';
      Object.assign(extra, { pairwise: s.pairwise, repairedToPsd: s.repairedToPsd, minimumPairObservations: s.minimumPairObservations });
    } else {
      const lw = ledoitWolf(panel, options);
      model = { kind: 'dense', method: 'ledoit-wolf', assets: n, mean: lw.mean, covariance: lw.covariance };
      if (lw.pairwise) missingMethod = 'pairwise-complete 1/T estimate' + (lw.repairedToPsd ? ', repaired to PSD' : '');
      Object.assign(extra, { shrinkage: lw.shrinkage, shrinkageTarget: lw.target });
    }
    onProgress({ stage: 'diagnostics', iteration: 0 });
    const eigenvalues = denseTopEigenvalues(model.covariance, n, Math.min(SPECTRUM_SIZE, n));
    let totalVariance = 0;
    for (let i = 0; i < n; i++) totalVariance += model.covariance[i * n + i];
    const ll = safeLogLikelihood(model, panel);
    return {
      model,
      factorScores: null,
      logLikelihood: ll,
      engineSeconds: (performance.now() - started) / 1000,
      diagnostics: {
        ...common,
        ...extra,
        logLikelihoodTrace: ll === null ? [] : [ll],
        iterations: 0,
        converged: true,
        heywood: new Array(n).fill(false),
        eigenvalues,
        marchenkoPasturEdge: marchenkoPasturEdge(totalVariance / n, n, weightingSummary.effectiveSampleSize),
        noiseVariance: null,
        totalVariance,
        factorVariance: null,
        explainedShare: null,
        criteria: null,
        recommendedFactors: null,
        recommendationReason: null,
        missingMethod,
      },
    };
  }

  // Factor models.
  if (hasMissing) {
    throw new Error('The panel has missing values and this engine build fits factor models on complete panels only: choose the missing-data policy "complete-rows" or "drop-assets"');
  }
  onProgress({ stage: 'scatter', iteration: 0 });
  const maxFactors = Math.min(MAX_FACTORS, n - 1, t - 1);
  let factors: number;
  let recommendation: { factors: number; reason: string; criteria: ModelDiagnostics['criteria'] } | null = null;
  const scatter = buildScatter(panel, { ...options, blockWidth: 10, expectedApplications: 200 });
  const spectrumSize = Math.min(Math.max(SPECTRUM_SIZE, maxFactors + 1), n);
  onProgress({ stage: 'spectrum', iteration: 0 });
  const spectrum = topSpectrum(scatter, spectrumSize);
  if (parameters.factors === 'recommend') {
    recommendation = recommendFactors(Array.from(spectrum.values), scatter.trace, n, weightingSummary.effectiveSampleSize, maxFactors);
    factors = recommendation.factors;
  } else {
    factors = parameters.factors ?? 1;
  }
  if (factors >= n) throw new Error(`The number of factors (${factors}) must be below the number of assets (${n})`);

  let model: FactorModel;
  let ll: number;
  let trace: number[];
  let iterations = 0;
  let evaluations: number | null = null;
  let converged = true;
  let heywood: boolean[] = new Array(n).fill(false);
  let noiseVariance: number | null = null;
  if (estimator === 'ppca') {
    onProgress({ stage: 'probabilistic PCA', iteration: 0 });
    const p = fitPpca(scatter, factors);
    noiseVariance = p.noiseVariance;
    model = { kind: 'factor', method: 'ppca', assets: n, factors, mean: scatter.mean, loadings: p.loadings, specificVariance: new Float64Array(n).fill(p.noiseVariance) };
    ll = p.logLikelihood;
    trace = [ll];
  } else {
    onProgress({ stage: 'factor analysis', iteration: 0 });
    const fa = fitFactorAnalysis(scatter, factors, {}, { onProgress: (p) => onProgress({ ...p, stage: 'factor analysis' }) });
    model = { kind: 'factor', method: 'fa', assets: n, factors, mean: scatter.mean, loadings: fa.loadings, specificVariance: fa.specificVariance };
    ll = fa.logLikelihood;
    trace = fa.trace;
    iterations = fa.iterations;
    evaluations = fa.evaluations;
    converged = fa.converged;
    heywood = fa.heywood;
  }
  onProgress({ stage: 'factor scores', iteration: iterations, logLikelihood: ll });
  const scores = factorScores(model, panel).scores;
  const h = communalities(model);
  let factorVariance = 0;
  let totalVariance = 0;
  for (let i = 0; i < n; i++) {
    factorVariance += h[i];
    totalVariance += h[i] + model.specificVariance[i];
  }
  const noiseForEdge = noiseVariance ?? (scatter.trace - sum(Array.from(spectrum.values).slice(0, factors))) / (n - factors);
  return {
    model,
    factorScores: scores,
    logLikelihood: ll,
    engineSeconds: (performance.now() - started) / 1000,
    diagnostics: {
      ...common,
      logLikelihoodTrace: trace,
      iterations,
      evaluations,
      converged,
      heywood,
      eigenvalues: Array.from(spectrum.values),
      marchenkoPasturEdge: marchenkoPasturEdge(noiseForEdge, n, weightingSummary.effectiveSampleSize),
      noiseVariance,
      totalVariance,
      factorVariance,
      explainedShare: totalVariance > 0 ? factorVariance / totalVariance : null,
      criteria: recommendation?.criteria ?? null,
      recommendedFactors: recommendation?.factors ?? null,
      recommendationReason: recommendation?.reason ?? null,
      missingMethod,
    },
  };
}

const sum = (xs: number[]) => xs.reduce((a, b) => a + b, 0);

/** Marchenko–Pastur upper edge σ²(1 + √(N/T))² (Marchenko & Pastur 1967): eigenvalues of pure noise stay below it. */
export function marchenkoPasturEdge(noiseVariance: number, n: number, t: number): number {
  return noiseVariance * (1 + Math.sqrt(n / t)) ** 2;
}

function safeLogLikelihood(model: CovarianceModel, panel: ReturnsPanel): number | null {
  try {
    const v = modelLogLikelihood(model, panel);
    return Number.isFinite(v) ? v : null;
  } catch {
    return null; // singular sample covariance (N ≥ T): no finite likelihood
  }
}

function denseTopEigenvalues(covariance: Float64Array, n: number, k: number): number[] {
  const scatterLike = {
    size: n,
    observations: n,
    diagonal: new Float64Array(n),
    trace: 0,
    mean: new Float64Array(n),
    weights: new Float64Array(0),
    effectiveSampleSize: 0,
    dense: covariance,
    apply: () => new Float64Array(0),
  };
  return Array.from(topSpectrum(scatterLike as never, k).values);
}

/**
 * Interim recommendation from the eigenvalue spectrum (until the engine's criteria table is wired in):
 * PPCA log-likelihood, AIC and BIC for L = 1 … Lmax from the eigenvalues (Tipping & Bishop 1999, eq. 4), the
 * Ahn & Horenstein (2013) eigenvalue ratio, and the count of eigenvalues above the Marchenko–Pastur edge.
 */
function recommendFactors(eigenvalues: number[], trace: number, n: number, t: number, maxFactors: number) {
  const criteria: NonNullable<ModelDiagnostics['criteria']> = [];
  const log2pi = Math.log(2 * Math.PI);
  let best = { l: 1, bic: Infinity };
  for (let l = 1; l <= Math.min(maxFactors, eigenvalues.length - 1); l++) {
    const top = sum(eigenvalues.slice(0, l));
    const sigma2 = (trace - top) / (n - l);
    let logDet = (n - l) * Math.log(sigma2);
    for (let j = 0; j < l; j++) logDet += Math.log(Math.max(eigenvalues[j], sigma2));
    const ll = -0.5 * t * (n * log2pi + logDet + n);
    const k = n * l - (l * (l - 1)) / 2 + 1 + n; // loadings up to rotation, σ², means
    const aic = -2 * ll + 2 * k;
    const bic = -2 * ll + Math.log(t) * k;
    const ratio = eigenvalues[l] > 0 ? eigenvalues[l - 1] / eigenvalues[l] : null;
    criteria.push({ factors: l, logLikelihood: ll, aic, bic, extra: { eigenvalueRatio: ratio } });
    if (bic < best.bic) best = { l, bic };
  }
  let ahn = criteria[0];
  for (const row of criteria) if ((row.extra?.eigenvalueRatio ?? 0) > (ahn.extra?.eigenvalueRatio ?? 0)) ahn = row;
  const edge = marchenkoPasturEdge(trace / n, n, t);
  const aboveEdge = eigenvalues.filter((v) => v > edge).length;
  const factors = Math.max(1, Math.min(best.l, maxFactors));
  const reason = `BIC is lowest at L = ${best.l} among L = 1 … ${criteria.length}; the Ahn–Horenstein eigenvalue ratio peaks at L = ${ahn.factors}; ${aboveEdge} eigenvalue${aboveEdge === 1 ? '' : 's'} lie above the Marchenko–Pastur edge.`;
  return { factors, reason, criteria };
}
