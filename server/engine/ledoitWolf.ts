/**
 * Ledoit–Wolf shrinkage towards a scaled identity (Ledoit & Wolf 2004, "A well-conditioned estimator for
 * large-dimensional covariance matrices", J. Multivariate Anal. 88, Lemmas 3.2–3.4, Theorem 3.2):
 *   Σ̂ = (1 − δ) S + δ μ I,  μ = tr S / N,  δ = min(b̄², d²) / d²
 *   d² = ‖S − μ I‖²_F / N,  b̄² = (1/N) Σ_t w_t² ‖x_t x_tᵀ − S‖²_F.
 * Convention, matching scikit-learn's `LedoitWolf`: S is the 1/T covariance of the centred data (weights summing to
 * one), not 1/(T−1); with zero mean the data are used uncentred (scikit-learn's assume_centered=True).
 * With equal weights b̄² reduces to scikit-learn's (1/(N T)) (Σ_t ‖x_t‖⁴ / T − ‖S‖²_F).
 * Missing values: the pairwise-complete 1/T estimate (repaired to PSD when needed) stands in for S and the
 * b̄² term uses the zero-filled centred data; flagged.
 */
import { multiplyABt } from './linalg/dense';
import { sampleCovariance } from './sampleCovariance';
import { buildScatter, denseScatter, panelHasMissing, weightedMean } from './scatter';
import type { MeanHandling, ReturnsPanel, Weighting } from './types';
import { effectiveSampleSize, observationWeights } from './weights';

export interface LedoitWolfResult {
  covariance: Float64Array;
  mean: Float64Array;
  /** δ in [0, 1]. */
  shrinkage: number;
  /** μ = tr S / N, the target's variance. */
  target: number;
  effectiveSampleSize: number;
  pairwise: boolean;
  repairedToPsd: boolean;
}

export function ledoitWolf(panel: ReturnsPanel, options: { weighting?: Weighting; mean?: MeanHandling } = {}): LedoitWolfResult {
  const { values, observations: t, assets: n } = panel;
  const meanHandling = options.mean ?? 'sample';
  const weights = observationWeights(t, options.weighting);
  let s: Float64Array;
  let mean: Float64Array;
  let pairwise = false;
  let repaired = false;
  if (panelHasMissing(panel)) {
    const pw = sampleCovariance(panel, { weighting: options.weighting, mean: meanHandling, divisor: 'ml' });
    s = pw.covariance;
    mean = pw.mean;
    pairwise = true;
    repaired = pw.repairedToPsd;
  } else {
    const scatter = buildScatter(panel, { weighting: options.weighting, mean: meanHandling, form: 'data' });
    s = denseScatter(scatter);
    mean = scatter.mean;
  }
  if (!pairwise) mean = weightedMean(panel, weights, meanHandling);

  let traceS = 0;
  for (let i = 0; i < n; i++) traceS += s[i * n + i];
  const mu = traceS / n;
  let normS2 = 0;
  for (let k = 0; k < n * n; k++) normS2 += s[k] * s[k];
  // d² = ‖S − μI‖² / N
  const d2 = (normS2 - 2 * mu * traceS + n * mu * mu) / n;

  // b̄² = (1/N) Σ_t w_t² (‖x_t‖⁴ − 2 x_tᵀ S x_t + ‖S‖²)
  const xc = new Float64Array(t * n);
  for (let r = 0; r < t; r++) {
    for (let i = 0; i < n; i++) {
      const v = values[r * n + i];
      xc[r * n + i] = Number.isNaN(v) ? 0 : v - mean[i];
    }
  }
  let sumW2 = 0;
  let sumW2Norm4 = 0;
  for (let r = 0; r < t; r++) {
    const w2 = weights[r] * weights[r];
    let q = 0;
    for (let i = 0; i < n; i++) q += xc[r * n + i] * xc[r * n + i];
    sumW2 += w2;
    sumW2Norm4 += w2 * q * q;
  }
  let quad = 0; // Σ_t w_t² x_tᵀ S x_t
  const equal = options.weighting === undefined || options.weighting.kind === 'equal';
  if (equal && !pairwise) {
    // With equal weights S = Xᵀ X / T, so Σ_t x_tᵀ S x_t = T ‖S‖²_F and Σ_t w_t² x_tᵀ S x_t = ‖S‖²_F / T.
    quad = sumW2 * normS2;
  } else {
    const xs = multiplyABt(xc, t, n, s, n); // rows x_tᵀ S (S symmetric)
    for (let r = 0; r < t; r++) {
      let q = 0;
      for (let i = 0; i < n; i++) q += xs[r * n + i] * xc[r * n + i];
      quad += weights[r] * weights[r] * q;
    }
  }
  let b2 = (sumW2Norm4 - 2 * quad + sumW2 * normS2) / n;
  b2 = Math.min(Math.max(b2, 0), d2);
  const shrinkage = d2 === 0 ? 0 : b2 / d2;
  const covariance = new Float64Array(n * n);
  for (let k = 0; k < n * n; k++) covariance[k] = (1 - shrinkage) * s[k];
  for (let i = 0; i < n; i++) covariance[i * n + i] += shrinkage * mu;
  return { covariance, mean, shrinkage, target: mu, effectiveSampleSize: effectiveSampleSize(weights), pairwise, repairedToPsd: repaired };
}
