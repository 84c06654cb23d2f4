/**
 * Products with a model covariance without forming N × N for factor models.
 * Factor model Σ = W Wᵀ + diag(Ψ) (Lawley & Maxwell 1971; Tipping & Bishop 1999 for Ψ = σ²I):
 *   Σ w = W (Wᵀ w) + Ψ ∘ w                      — O(N·L)
 *   Σ⁻¹ v = Ψ⁻¹v − Ψ⁻¹W (I + WᵀΨ⁻¹W)⁻¹ WᵀΨ⁻¹ v  — Woodbury identity (Woodbury 1950; Hager 1989, eq. (1)), O(N·L² + L³)
 * Dense models multiply by the stored Σ directly.
 */
import type { CovarianceModel, FactorModel } from './types';
import { choleskySolve, tryCholesky } from './linalg/cholesky';

/** Throws a clear error when a weight vector does not fit the model. */
export function assertWeights(model: CovarianceModel, weights: ArrayLike<number>, label = 'weights'): void {
  if (weights.length !== model.assets) {
    throw new Error(`${label}: expected ${model.assets} entries (one per asset), got ${weights.length}`);
  }
  for (let i = 0; i < weights.length; i++) {
    if (!Number.isFinite(weights[i])) throw new Error(`${label}: entry ${i} is not a finite number (${weights[i]})`);
  }
}

/** Exposures y = Wᵀ w (length L). */
export function loadingsTransposeTimes(model: FactorModel, w: ArrayLike<number>, out = new Float64Array(model.factors)): Float64Array {
  const { assets: n, factors: l, loadings } = model;
  out.fill(0);
  for (let i = 0; i < n; i++) {
    const wi = w[i];
    if (wi === 0) continue;
    const row = i * l;
    for (let k = 0; k < l; k++) out[k] += loadings[row + k] * wi;
  }
  return out;
}

/** Σ w for any model; O(N·L) for factor models, O(N²) for dense ones. */
export function covarianceTimes(model: CovarianceModel, w: ArrayLike<number>, out = new Float64Array(model.assets)): Float64Array {
  const n = model.assets;
  if (model.kind === 'dense') {
    const sigma = model.covariance;
    for (let i = 0; i < n; i++) {
      let s = 0;
      const row = i * n;
      for (let j = 0; j < n; j++) s += sigma[row + j] * w[j];
      out[i] = s;
    }
    return out;
  }
  const { factors: l, loadings, specificVariance } = model;
  const y = loadingsTransposeTimes(model, w);
  for (let i = 0; i < n; i++) {
    let s = specificVariance[i] * w[i];
    const row = i * l;
    for (let k = 0; k < l; k++) s += loadings[row + k] * y[k];
    out[i] = s;
  }
  return out;
}

/** The explicit N × N covariance (W Wᵀ + diag Ψ for factor models); for small N, tests and exports. */
export function denseCovariance(model: CovarianceModel): Float64Array {
  if (model.kind === 'dense') return model.covariance.slice();
  const { assets: n, factors: l, loadings, specificVariance } = model;
  const sigma = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j <= i; j++) {
      let s = 0;
      for (let k = 0; k < l; k++) s += loadings[i * l + k] * loadings[j * l + k];
      if (i === j) s += specificVariance[i];
      sigma[i * n + j] = s;
      sigma[j * n + i] = s;
    }
  }
  return sigma;
}

/** Throws unless every specific variance is positive and finite (needed wherever Ψ⁻¹ appears). */
export function assertPositiveSpecificVariance(model: FactorModel): void {
  for (let i = 0; i < model.assets; i++) {
    const psi = model.specificVariance[i];
    if (!(psi > 0) || !Number.isFinite(psi)) {
      throw new Error(`specific variance of asset ${i} must be positive and finite for Ψ⁻¹, got ${psi}`);
    }
  }
}

/**
 * Capacitance matrix M = I + Wᵀ Ψ⁻¹ W (L × L), the posterior precision of the factors
 * (Rubin & Thayer 1982; Tipping & Bishop 1999, eq. (7) with Ψ = σ²I).
 */
export function capacitanceMatrix(model: FactorModel): Float64Array {
  assertPositiveSpecificVariance(model);
  const { assets: n, factors: l, loadings, specificVariance } = model;
  const m = new Float64Array(l * l);
  for (let i = 0; i < n; i++) {
    const inv = 1 / specificVariance[i];
    const row = i * l;
    for (let a = 0; a < l; a++) {
      const wa = loadings[row + a] * inv;
      if (wa === 0) continue;
      for (let b = 0; b <= a; b++) m[a * l + b] += wa * loadings[row + b];
    }
  }
  for (let a = 0; a < l; a++) {
    m[a * l + a] += 1;
    for (let b = 0; b < a; b++) m[b * l + a] = m[a * l + b];
  }
  return m;
}

/**
 * A reusable Σ⁻¹ for a factor model by the Woodbury identity (Woodbury 1950; Hager 1989):
 * Σ⁻¹ v = Ψ⁻¹v − Ψ⁻¹W M⁻¹ WᵀΨ⁻¹v with M = I + WᵀΨ⁻¹W. Never forms N × N.
 */
export function factorPrecision(model: FactorModel): (v: ArrayLike<number>) => Float64Array {
  const { assets: n, factors: l, loadings, specificVariance } = model;
  const chol = tryCholesky(capacitanceMatrix(model), l);
  if (!chol) throw new Error('capacitance matrix I + WᵀΨ⁻¹W is not positive definite');
  return (v) => {
    const scaled = new Float64Array(n);
    for (let i = 0; i < n; i++) scaled[i] = v[i] / specificVariance[i];
    const y = new Float64Array(l);
    for (let i = 0; i < n; i++) {
      const s = scaled[i];
      const row = i * l;
      for (let k = 0; k < l; k++) y[k] += loadings[row + k] * s;
    }
    choleskySolve(chol, l, y, 1);
    for (let i = 0; i < n; i++) {
      let s = 0;
      const row = i * l;
      for (let k = 0; k < l; k++) s += loadings[row + k] * y[k];
      scaled[i] -= s / specificVariance[i];
    }
    return scaled;
  };
}
