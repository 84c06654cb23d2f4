/**
 * Sample covariance.
 *
 * Complete panel: S = Σ_t w_t (x_t − m)(x_t − m)ᵀ / (1 − Σ_t w_t²) with weights summing to one. For equal weights this
 * is the usual 1/(T−1) estimate; for exponential weights it is numpy.cov's reliability-weighted unbiased form
 * (aweights, ddof = 1). With zero mean no degree of freedom is spent and the divisor is 1 (i.e. 1/T).
 *
 * Missing values: the pairwise-complete estimate (each pair over the dates both are observed, with that pair's
 * own weighted means), which need not be positive semidefinite; it is then repaired to the nearest PSD matrix with
 * the same variances (Higham 2002, see nearestPsd.ts) and flagged.
 */
import { tryCholesky } from './linalg/cholesky';
import { multiplyABt } from './linalg/dense';
import { nearestPsdCovariance } from './nearestPsd';
import { buildScatter, denseScatter, panelHasMissing } from './scatter';
import type { MeanHandling, ReturnsPanel, Weighting } from './types';
import { effectiveSampleSize, observationWeights } from './weights';

export interface SampleCovarianceResult {
  covariance: Float64Array;
  mean: Float64Array;
  effectiveSampleSize: number;
  /** True when missing values forced the pairwise-complete estimate. */
  pairwise: boolean;
  /** True when the pairwise estimate was not PSD and was repaired (Higham 2002). */
  repairedToPsd: boolean;
  /** ‖repaired − pairwise‖_F / ‖pairwise‖_F (0 when not repaired). */
  repairChange: number;
  /** Fewest dates any pair of assets shares. */
  minimumPairObservations: number;
}

export interface SampleCovarianceOptions {
  weighting?: Weighting;
  mean?: MeanHandling;
  /** 'unbiased' (default: 1/(T−1) with a sample mean) or 'ml' (1/T, as scikit-learn's estimators use). */
  divisor?: 'unbiased' | 'ml';
  /** Repair a pairwise estimate that is not PSD (default true). False: answer it as estimated (e.g. for its spectrum). */
  repair?: boolean;
}

export function sampleCovariance(panel: ReturnsPanel, options: SampleCovarianceOptions = {}): SampleCovarianceResult {
  const meanHandling = options.mean ?? 'sample';
  const unbiased = (options.divisor ?? 'unbiased') === 'unbiased' && meanHandling === 'sample';
  if (panelHasMissing(panel)) return pairwiseCovariance(panel, options.weighting, meanHandling, unbiased, options.repair ?? true);
  const { observations: t, assets: n } = panel;
  if (t < 2 && unbiased) throw new Error('the sample covariance needs at least 2 observations');
  const scatter = buildScatter(panel, { weighting: options.weighting, mean: meanHandling, form: 'data' });
  const s = denseScatter(scatter);
  const covariance = new Float64Array(s);
  if (unbiased) {
    let w2 = 0;
    for (const w of scatter.weights) w2 += w * w;
    const factor = 1 / (1 - w2);
    for (let k = 0; k < n * n; k++) covariance[k] *= factor;
  }
  return {
    covariance,
    mean: scatter.mean,
    effectiveSampleSize: scatter.effectiveSampleSize,
    pairwise: false,
    repairedToPsd: false,
    repairChange: 0,
    minimumPairObservations: t,
  };
}

function pairwiseCovariance(panel: ReturnsPanel, weighting: Weighting | undefined, meanHandling: MeanHandling, unbiased: boolean, repair: boolean): SampleCovarianceResult {
  const { values, observations: t, assets: n } = panel;
  const weights = observationWeights(t, weighting);
  // Column-major (asset rows) copies: observed indicator O, w·O, w·X0, w²·O and X0 (NaN → 0).
  const o = new Float64Array(n * t);
  const wo = new Float64Array(n * t);
  const w2o = new Float64Array(n * t);
  const x0 = new Float64Array(n * t);
  const wx = new Float64Array(n * t);
  for (let r = 0; r < t; r++) {
    const w = weights[r];
    for (let i = 0; i < n; i++) {
      const v = values[r * n + i];
      if (Number.isNaN(v)) continue;
      const k = i * t + r;
      o[k] = 1;
      wo[k] = w;
      w2o[k] = w * w;
      x0[k] = v;
      wx[k] = w * v;
    }
  }
  const v1 = multiplyABt(wo, n, t, o, n); // Σ w o_i o_j
  const v2 = multiplyABt(w2o, n, t, o, n); // Σ w² o_i o_j
  const sxx = multiplyABt(wx, n, t, x0, n); // Σ w x_i x_j
  const sxo = multiplyABt(wx, n, t, o, n); // [i][j] = Σ w x_i o_j
  const pairCount = multiplyABt(o, n, t, o, n);
  let minPair = Infinity;
  const cov = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j <= i; j++) {
      const c = pairCount[i * n + j];
      minPair = Math.min(minPair, c);
      const sw = v1[i * n + j];
      if (c < (unbiased ? 2 : 1) || sw <= 0) {
        throw new Error(`assets ${i + 1} and ${j + 1} share only ${c} observed dates: too few for a covariance`);
      }
      let value: number;
      if (meanHandling === 'zero') value = sxx[i * n + j] / sw;
      else {
        const mi = sxo[i * n + j] / sw; // mean of i over dates j is observed too
        const mj = sxo[j * n + i] / sw;
        value = sxx[i * n + j] / sw - mi * mj;
        if (unbiased) value /= 1 - v2[i * n + j] / (sw * sw);
      }
      cov[i * n + j] = value;
      cov[j * n + i] = value;
    }
  }
  const mean = new Float64Array(n);
  if (meanHandling === 'sample') {
    for (let i = 0; i < n; i++) {
      let s = 0;
      let sw = 0;
      for (let r = 0; r < t; r++) {
        s += wx[i * t + r];
        sw += wo[i * t + r];
      }
      mean[i] = s / sw;
    }
  }
  let repaired = false;
  let repairChange = 0;
  let covariance: Float64Array = cov;
  if (repair && !tryCholesky(cov, n)) {
    const fix = nearestPsdCovariance(cov, n);
    covariance = fix.matrix;
    repaired = true;
    repairChange = fix.relativeChange;
  }
  return {
    covariance,
    mean,
    effectiveSampleSize: effectiveSampleSize(weights),
    pairwise: true,
    repairedToPsd: repaired,
    repairChange,
    minimumPairObservations: minPair,
  };
}
