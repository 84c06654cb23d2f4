/**
 * Probabilistic PCA in closed form (Tipping & Bishop 1999, "Probabilistic principal component analysis",
 * JRSS B 61, eqs. 7–8): with λ₁ ≥ … ≥ λ_N the eigenvalues of the 1/T scatter S and U_L the top-L eigenvectors,
 *   σ² = (tr S − Σ_{k≤L} λ_k) / (N − L),   W = U_L (Λ_L − σ² I)^{1/2}.
 * Only the top eigenpairs are computed (block Lanczos, linalg/eigen.ts), never a full N × N decomposition.
 * When T < N they come from the T × T Gram matrix G = Z Zᵀ (Connor & Korajczyk 1986, "Performance measurement with
 * the arbitrage pricing theory", J. Financial Economics 15): G u = λ u gives S v = λ v with v = Zᵀ u / √λ.
 */
import { multiplyABt } from './linalg/dense';
import { parallelMultiplyABt } from './linalg/parallel';
import { denseOperator, topEigenpairs } from './linalg/eigen';
import { canonicalLoadings } from './orientation';
import { denseScatter, type Scatter } from './scatter';

export interface Spectrum {
  /** The top eigenvalues of S, decreasing. */
  values: Float64Array;
  /** The matching eigenvectors (N × k, row-major). */
  vectors: Float64Array;
  /** Which matrix the eigenproblem was solved on. */
  via: 'gram' | 'covariance' | 'operator';
}

/** Top-k eigenpairs of the scatter S, using the smaller of the N × N and T × T problems. */
export function topSpectrum(scatter: Scatter, k: number, tolerance = 1e-11, direct = false, convergeCount = k): Spectrum {
  const n = scatter.size;
  const t = scatter.observations;
  if (k === 0) return { values: new Float64Array(0), vectors: new Float64Array(0), via: 'covariance' };
  if (direct) {
    // Krylov on the scatter as it is held (data or dense), no Gram/covariance formation: for warm starts.
    const eig = topEigenpairs(scatter, k, { tolerance, basisSize: Math.min(n, 3 * Math.max(8, k + 4)), maxRestarts: 20, convergeCount });
    return { values: eig.values.map((v) => Math.max(v, 0)), vectors: eig.vectors, via: scatter.dense ? 'covariance' : 'operator' };
  }
  if (scatter.data && t < n && !scatter.dense) {
    const { z } = scatter.data;
    const g = parallelMultiplyABt(z, t, n, z, t, true);
    const kk = Math.min(k, t);
    const eig = topEigenpairs(denseOperator(g, t), kk, { tolerance, convergeCount: Math.min(convergeCount, kk) });
    // v_j = Zᵀ u_j / √λ_j, as rows (k × N): Uᵀ Z
    const ut = new Float64Array(kk * t);
    for (let r = 0; r < t; r++) for (let j = 0; j < kk; j++) ut[j * t + r] = eig.vectors[r * kk + j];
    const vt = parallelMultiplyABt(ut, kk, t, scatter.data.zt, n);
    const vectors = new Float64Array(n * k);
    const values = new Float64Array(k);
    for (let j = 0; j < kk; j++) {
      const lam = Math.max(eig.values[j], 0);
      values[j] = lam;
      const scale = lam > 0 ? 1 / Math.sqrt(lam) : 0;
      for (let i = 0; i < n; i++) vectors[i * k + j] = vt[j * n + i] * scale;
    }
    return { values, vectors, via: 'gram' };
  }
  const s = denseScatter(scatter);
  const eig = topEigenpairs(denseOperator(s, n), k, { tolerance, convergeCount });
  const values = eig.values.map((v) => Math.max(v, 0));
  return { values, vectors: eig.vectors, via: 'covariance' };
}

export interface PpcaResult {
  loadings: Float64Array; // N × L, canonical orientation
  noiseVariance: number; // σ²
  /** Top eigenvalues of S used (length ≥ L). */
  spectrum: Float64Array;
  logLikelihood: number;
  via: 'gram' | 'covariance' | 'operator';
}

export interface PpcaOptions {
  /** Relative residual tolerance of the eigenpairs (default 1e-9: eigenvalue errors are quadratic in the residual,
   * so σ² is still good to about 1e-10; problems up to N or T = 200 are solved densely and exactly). */
  tolerance?: number;
  /** Use the scatter's own operator without forming a Gram or covariance matrix (cheap warm starts). */
  direct?: boolean;
}

/** Closed-form PPCA from a scatter. `spectrumSize` ≥ L eigenvalues are returned for diagnostics. */
export function fitPpca(scatter: Scatter, l: number, spectrumSize = l, options: PpcaOptions = {}): PpcaResult {
  const n = scatter.size;
  if (!(Number.isInteger(l) && l >= 0 && l < n)) throw new Error(`number of factors must be an integer in [0, ${n - 1}], got ${l}`);
  const k = Math.min(Math.max(l, spectrumSize), n);
  // Only the top L pairs enter σ² and W; the extra diagnostic eigenvalues ride along (errors quadratic in residuals).
  const spec = topSpectrum(scatter, k, options.tolerance ?? 1e-9, options.direct ?? false, Math.max(l, 1));
  let top = 0;
  for (let j = 0; j < l; j++) top += spec.values[j];
  const sigma2 = Math.max((scatter.trace - top) / (n - l), 1e-300);
  const w = new Float64Array(n * l);
  for (let j = 0; j < l; j++) {
    const scale = Math.sqrt(Math.max(spec.values[j] - sigma2, 0));
    for (let i = 0; i < n; i++) w[i * l + j] = spec.vectors[i * k + j] * scale;
  }
  // Tipping & Bishop (1999) eq. 4 at the optimum: ℓ = −(T/2)[N log 2π + Σ_{k≤L} log λ_k + (N−L) log σ² + N]
  // (eigenvalues below σ² are clipped: their directions then carry σ² only).
  let logDet = (n - l) * Math.log(sigma2);
  let trTerm = (scatter.trace - top) / sigma2;
  for (let j = 0; j < l; j++) {
    const c = Math.max(spec.values[j], sigma2);
    logDet += Math.log(c);
    trTerm += spec.values[j] / c;
  }
  const logLikelihood = -0.5 * scatter.observations * (n * Math.log(2 * Math.PI) + logDet + trTerm);
  const psi = new Float64Array(n).fill(sigma2);
  return { loadings: canonicalLoadings(w, psi, n, l), noiseVariance: sigma2, spectrum: spec.values.slice(0, k), logLikelihood, via: spec.via };
}
