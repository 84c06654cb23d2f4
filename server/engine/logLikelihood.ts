/**
 * Gaussian log-likelihoods. Totals are sums over observations:
 *   ℓ = −(T/2) [N log 2π + log|Σ| + tr(Σ⁻¹ S)],  S = (1/T) Σ_t (x_t − μ)(x_t − μ)ᵀ,
 * the convention of scikit-learn's FactorAnalysis (its loglike_ is this total; score() is ℓ / T).
 * With observation weights summing to one, S is the weighted scatter and ℓ is T times the weighted mean.
 *
 * For Σ = W Wᵀ + Ψ only L × L work per observation is needed (O(N L²) setup):
 *   Woodbury (Woodbury 1950):   Σ⁻¹ = Ψ⁻¹ − Ψ⁻¹ W M⁻¹ Wᵀ Ψ⁻¹,  M = I + Wᵀ Ψ⁻¹ W;
 *   matrix determinant lemma:  log|Σ| = Σᵢ log Ψᵢ + log|M|.
 * Rows with missing entries use the marginal of their observed entries (M minus the missing assets' terms).
 */
import { cholesky, choleskyLogDet, tryCholesky } from './linalg/cholesky';
import { multiplyABt } from './linalg/dense';
import type { Scatter } from './scatter';
import type { CovarianceModel, FactorModel, ReturnsPanel } from './types';

export const LOG_2PI = Math.log(2 * Math.PI);

/** Pieces shared by the likelihood and the EM step: Bᵀ = Wᵀ Ψ⁻¹ (L × N) and M = I + Wᵀ Ψ⁻¹ W. */
export function woodburyPieces(w: Float64Array, psi: Float64Array, n: number, l: number): { bt: Float64Array; m: Float64Array } {
  const bt = new Float64Array(l * n);
  const m = new Float64Array(l * l);
  for (let i = 0; i < n; i++) {
    const inv = 1 / psi[i];
    for (let a = 0; a < l; a++) {
      const ba = w[i * l + a] * inv;
      bt[a * n + i] = ba;
      for (let b = 0; b <= a; b++) m[a * l + b] += ba * w[i * l + b];
    }
  }
  for (let a = 0; a < l; a++) {
    m[a * l + a] += 1;
    for (let b = 0; b < a; b++) m[b * l + a] = m[a * l + b];
  }
  return { bt, m };
}

/** Total log-likelihood of Σ = W Wᵀ + diag ψ against a scatter (at the scatter's mean), one application of S. */
export function factorLogLikelihoodFromScatter(w: Float64Array, psi: Float64Array, l: number, scatter: Scatter): number {
  const n = scatter.size;
  const { bt, m } = woodburyPieces(w, psi, n, l);
  let logDet = 0;
  let trPsiS = 0;
  for (let i = 0; i < n; i++) {
    logDet += Math.log(psi[i]);
    trPsiS += scatter.diagonal[i] / psi[i];
  }
  let trCorrection = 0;
  if (l > 0) {
    const chol = cholesky(m, l);
    logDet += choleskyLogDet(chol, l);
    const sbt = scatter.apply(bt, l);
    const q = multiplyABt(bt, l, n, sbt, l); // Bᵀ S B
    const minv = invertFromCholesky(chol, l);
    for (let a = 0; a < l; a++) for (let b = 0; b < l; b++) trCorrection += minv[a * l + b] * q[b * l + a];
  }
  return -0.5 * scatter.observations * (n * LOG_2PI + logDet + trPsiS - trCorrection);
}

export function invertFromCholesky(chol: Float64Array, l: number): Float64Array {
  // (L Lᵀ)⁻¹ by solving column by column
  const inv = new Float64Array(l * l);
  for (let c = 0; c < l; c++) {
    const y = new Float64Array(l);
    y[c] = 1;
    for (let i = 0; i < l; i++) {
      let s = y[i];
      for (let k = 0; k < i; k++) s -= chol[i * l + k] * y[k];
      y[i] = s / chol[i * l + i];
    }
    for (let i = l - 1; i >= 0; i--) {
      let s = y[i];
      for (let k = i + 1; k < l; k++) s -= chol[k * l + i] * y[k];
      y[i] = s / chol[i * l + i];
    }
    for (let i = 0; i < l; i++) inv[i * l + c] = y[i];
  }
  for (let a = 0; a < l; a++) {
    for (let b = 0; b < a; b++) {
      const v = 0.5 * (inv[a * l + b] + inv[b * l + a]);
      inv[a * l + b] = v;
      inv[b * l + a] = v;
    }
  }
  return inv;
}

/** Sum over rows of log N(x_t; μ, W Wᵀ + Ψ), missing entries marginalised out. O(T N L). */
export function factorModelLogLikelihood(model: FactorModel, panel: ReturnsPanel): number {
  const { assets: n, factors: l, loadings: w, specificVariance: psi, mean } = model;
  if (panel.assets !== n) throw new Error(`panel has ${panel.assets} assets, model has ${n}`);
  const t = panel.observations;
  const { bt, m } = woodburyPieces(w, psi, n, l);
  const xc = new Float64Array(t * n);
  const missingRows: number[] = [];
  for (let r = 0; r < t; r++) {
    let missing = false;
    for (let i = 0; i < n; i++) {
      const v = panel.values[r * n + i];
      if (Number.isNaN(v)) missing = true;
      else xc[r * n + i] = v - mean[i];
    }
    if (missing) missingRows.push(r);
  }
  const y = l > 0 ? multiplyABt(xc, t, n, bt, l) : new Float64Array(0); // T × L: Bᵀ x_t
  let logPsiAll = 0;
  for (let i = 0; i < n; i++) logPsiAll += Math.log(psi[i]);
  const fullChol = l > 0 ? cholesky(m, l) : new Float64Array(0);
  const fullLogDetM = l > 0 ? choleskyLogDet(fullChol, l) : 0;
  const isMissingRow = new Uint8Array(t);
  for (const r of missingRows) isMissingRow[r] = 1;
  let total = 0;
  const z = new Float64Array(l);
  for (let r = 0; r < t; r++) {
    let chol = fullChol;
    let logDet = logPsiAll + fullLogDetM;
    let observed = n;
    if (isMissingRow[r]) {
      const mo = m.slice();
      logDet = 0;
      observed = 0;
      for (let i = 0; i < n; i++) {
        if (Number.isNaN(panel.values[r * n + i])) {
          const inv = 1 / psi[i];
          for (let a = 0; a < l; a++) for (let b = 0; b < l; b++) mo[a * l + b] -= w[i * l + a] * w[i * l + b] * inv;
        } else {
          logDet += Math.log(psi[i]);
          observed++;
        }
      }
      if (observed === 0) continue;
      if (l > 0) {
        chol = cholesky(mo, l);
        logDet += choleskyLogDet(chol, l);
      }
    }
    let quad = 0;
    for (let i = 0; i < n; i++) {
      const v = xc[r * n + i];
      quad += (v * v) / psi[i];
    }
    // subtract ‖L⁻¹ Bᵀx‖² (Woodbury)
    for (let a = 0; a < l; a++) {
      let s = y[r * l + a];
      for (let k = 0; k < a; k++) s -= chol[a * l + k] * z[k];
      z[a] = s / chol[a * l + a];
      quad -= z[a] * z[a];
    }
    total += -0.5 * (observed * LOG_2PI + logDet + quad);
  }
  return total;
}

/** Sum over rows of log N(x_t; μ, Σ) for a dense Σ; −Infinity when Σ is singular. Missing entries marginalised. */
export function denseLogLikelihood(covariance: Float64Array, mean: Float64Array, panel: ReturnsPanel): number {
  const n = panel.assets;
  const t = panel.observations;
  const chol = tryCholesky(covariance, n);
  if (!chol) return -Infinity;
  const logDet = choleskyLogDet(chol, n);
  let total = 0;
  const z = new Float64Array(n);
  for (let r = 0; r < t; r++) {
    let complete = true;
    for (let i = 0; i < n; i++) if (Number.isNaN(panel.values[r * n + i])) complete = false;
    if (!complete) {
      total += rowLogLikelihoodSubset(covariance, mean, panel, r);
      continue;
    }
    let quad = 0;
    for (let i = 0; i < n; i++) {
      let s = panel.values[r * n + i] - mean[i];
      for (let k = 0; k < i; k++) s -= chol[i * n + k] * z[k];
      z[i] = s / chol[i * n + i];
      quad += z[i] * z[i];
    }
    total += -0.5 * (n * LOG_2PI + logDet + quad);
  }
  return total;
}

function rowLogLikelihoodSubset(covariance: Float64Array, mean: Float64Array, panel: ReturnsPanel, r: number): number {
  const n = panel.assets;
  const idx: number[] = [];
  for (let i = 0; i < n; i++) if (!Number.isNaN(panel.values[r * n + i])) idx.push(i);
  const k = idx.length;
  if (k === 0) return 0;
  const sub = new Float64Array(k * k);
  for (let a = 0; a < k; a++) for (let b = 0; b < k; b++) sub[a * k + b] = covariance[idx[a] * n + idx[b]];
  const chol = tryCholesky(sub, k);
  if (!chol) return -Infinity;
  let quad = 0;
  const z = new Float64Array(k);
  for (let a = 0; a < k; a++) {
    let s = panel.values[r * n + idx[a]] - mean[idx[a]];
    for (let c = 0; c < a; c++) s -= chol[a * k + c] * z[c];
    z[a] = s / chol[a * k + a];
    quad += z[a] * z[a];
  }
  return -0.5 * (k * LOG_2PI + choleskyLogDet(chol, k) + quad);
}

/** Log-likelihood of any fitted model on a panel (summed over observations, unweighted). */
export function modelLogLikelihood(model: CovarianceModel, panel: ReturnsPanel): number {
  return model.kind === 'factor' ? factorModelLogLikelihood(model, panel) : denseLogLikelihood(model.covariance, model.mean, panel);
}
