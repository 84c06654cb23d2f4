/**
 * Factor models from panels with missing values and short histories (late listings, gaps).
 *
 * Method: maximum likelihood on the observed entries by EM, treating each missing return as latent along with the
 * factors (Dempster, Laird & Rubin 1977; for factor analysis with missing data see Little & Rubin 2002, "Statistical
 * Analysis with Missing Data", §11.3, and for PPCA Tipping & Bishop 1999, Appendix). Assumes entries are missing at
 * random. The mean is estimated jointly by augmenting z̃ = [z; 1], Λ = [W μ].
 * E-step for date t with observed set O: M_O = I + W_Oᵀ Ψ_O⁻¹ W_O (the full M minus the missing assets' terms),
 *   ẑ = M_O⁻¹ W_Oᵀ Ψ_O⁻¹ (x_O − μ_O),  Cov[z] = M_O⁻¹;  a missing x_i has E[x_i | ·] = μ_i + w_iᵀ z.
 * M-step: Λ_i = (Σ_t w_t E[x_ti z̃ᵀ]) (Σ_t w_t E[z̃ z̃ᵀ])⁻¹,  Ψ_i = Σ_t w_t E[x_ti²] − Λ_i Σ_t w_t E[x_ti z̃]
 *   (PPCA: σ² = mean over i). Accelerated by SQUAREM (squarem.ts), started from PPCA on the mean-filled panel.
 * Cost per EM step: O(T N L) in tiled products plus O(L²) per missing entry and O(L³) per incomplete date.
 */
import { cholesky, choleskyLogDet } from './linalg/cholesky';
import { multiplyABt, transpose } from './linalg/dense';
import { invertFromCholesky, LOG_2PI } from './logLikelihood';
import { canonicalLoadings } from './orientation';
import { fitPpca } from './ppca';
import { buildScatter, weightedMean } from './scatter';
import { squarem } from './squarem';
import type { FitControl, MeanHandling, ReturnsPanel, Weighting } from './types';
import { effectiveSampleSize, observationWeights } from './weights';

export interface MissingFitOptions {
  method: 'fa' | 'ppca';
  factors: number;
  weighting?: Weighting;
  mean?: MeanHandling;
  tolerance?: number;
  parameterTolerance?: number;
  maxEvaluations?: number;
  floorShare?: number;
}

export interface MissingFitResult {
  loadings: Float64Array;
  specificVariance: Float64Array;
  mean: Float64Array;
  logLikelihood: number;
  trace: number[];
  iterations: number;
  evaluations: number;
  converged: boolean;
  heywood: boolean[];
  missingEntries: number;
  incompleteDates: number;
  effectiveSampleSize: number;
  /** Observed entries per asset. */
  observedPerAsset: number[];
}

export function fitWithMissing(panel: ReturnsPanel, options: MissingFitOptions, control: FitControl = {}): MissingFitResult {
  const { values, observations: t, assets: n } = panel;
  const l = options.factors;
  if (!(Number.isInteger(l) && l >= 0 && l < n)) throw new Error(`number of factors must be an integer in [0, ${n - 1}], got ${l}`);
  const estimateMean = (options.mean ?? 'sample') === 'sample';
  const weights = observationWeights(t, options.weighting);
  const observed = new Uint8Array(t * n);
  const observedPerAsset = new Array<number>(n).fill(0);
  let missingEntries = 0;
  const missingByRow: number[][] = [];
  for (let r = 0; r < t; r++) {
    const miss: number[] = [];
    for (let i = 0; i < n; i++) {
      const v = values[r * n + i];
      if (Number.isNaN(v)) {
        miss.push(i);
        missingEntries++;
      } else if (!Number.isFinite(v)) throw new Error(`panel value at row ${r + 1}, asset ${i + 1} is not finite`);
      else {
        observed[r * n + i] = 1;
        observedPerAsset[i]++;
      }
    }
    missingByRow.push(miss);
  }
  for (let i = 0; i < n; i++) if (observedPerAsset[i] < 2) throw new Error(`asset ${i + 1} has ${observedPerAsset[i]} observed returns: too few to estimate`);
  const incompleteDates = missingByRow.filter((m) => m.length > 0).length;

  // Start: mean-filled panel → PPCA.
  const mean0 = weightedMean(panel, weights, options.mean ?? 'sample');
  const filled = new Float64Array(t * n);
  for (let k = 0; k < t * n; k++) filled[k] = observed[k] ? values[k] : mean0[k % n];
  const startScatter = buildScatter({ values: filled, observations: t, assets: n }, { weighting: options.weighting, mean: options.mean, form: 'data' });
  const floorShare = options.floorShare ?? 0.005;
  const floor = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    // floors relative to the observed variance of each asset
    let s = 0;
    let sw = 0;
    for (let r = 0; r < t; r++) if (observed[r * n + i]) {
      s += weights[r] * (values[r * n + i] - mean0[i]) ** 2;
      sw += weights[r];
    }
    const variance = s / sw;
    if (!(variance > 0)) throw new Error(`asset ${i + 1} has zero variance over its observed dates`);
    floor[i] = floorShare * variance;
  }
  const ppca = fitPpca(startScatter, l);
  const la = estimateMean ? l + 1 : l; // augmented width
  const size = n * la + n;
  const theta0 = new Float64Array(size); // rows Λ_i = [w_i, μ_i], then ψ
  for (let i = 0; i < n; i++) {
    for (let k = 0; k < l; k++) theta0[i * la + k] = ppca.loadings[i * l + k];
    if (estimateMean) theta0[i * la + l] = mean0[i];
    theta0[n * la + i] = Math.max(ppca.noiseVariance, floor[i]);
  }
  const x0 = new Float64Array(t * n); // zero-filled data
  for (let k = 0; k < t * n; k++) x0[k] = observed[k] ? values[k] : 0;
  const isotropic = options.method === 'ppca';

  const step = (theta: Float64Array) => {
    const psi = theta.subarray(n * la);
    // Full-pattern pieces.
    const bt = new Float64Array(l * n);
    const mFull = new Float64Array(l * l);
    let logPsiAll = 0;
    for (let i = 0; i < n; i++) {
      const inv = 1 / psi[i];
      logPsiAll += Math.log(psi[i]);
      for (let a = 0; a < l; a++) {
        const ba = theta[i * la + a] * inv;
        bt[a * n + i] = ba;
        for (let b = 0; b <= a; b++) mFull[a * l + b] += ba * theta[i * la + b];
      }
    }
    for (let a = 0; a < l; a++) {
      mFull[a * l + a] += 1;
      for (let b = 0; b < a; b++) mFull[b * l + a] = mFull[a * l + b];
    }
    // centred, zero-filled data and Bᵀ d_t for all dates (T × L)
    const d = new Float64Array(t * n);
    for (let r = 0; r < t; r++) for (let i = 0; i < n; i++) if (observed[r * n + i]) d[r * n + i] = x0[r * n + i] - (estimateMean ? theta[i * la + l] : 0);
    const y = l > 0 ? multiplyABt(d, t, n, bt, l) : new Float64Array(0);
    const cholFull = l > 0 ? cholesky(mFull, l) : new Float64Array(0);
    const minvFull = l > 0 ? invertFromCholesky(cholFull, l) : new Float64Array(0);
    const logDetMFull = l > 0 ? choleskyLogDet(cholFull, l) : 0;
    const zhat = new Float64Array(t * la); // weighted [ẑ, 1] rows: w_t · z̃_t
    const ezz = new Float64Array(la * la); // Σ_t w_t E[z̃ z̃ᵀ]
    // Per-asset accumulators: A_i = Σ_t w_t E[x_ti z̃ᵀ] (N × la), q_i = Σ_t w_t E[x_ti²]
    const acc = new Float64Array(n * la);
    const sq = new Float64Array(n);
    let ll = 0;
    const zr = new Float64Array(l);
    for (let r = 0; r < t; r++) {
      const w = weights[r];
      const miss = missingByRow[r];
      let minv = minvFull;
      let chol = cholFull;
      let logDet = logPsiAll + logDetMFull;
      let nObs = n;
      if (miss.length > 0) {
        const mo = mFull.slice();
        for (const i of miss) {
          const inv = 1 / psi[i];
          logDet -= Math.log(psi[i]);
          for (let a = 0; a < l; a++) for (let b = 0; b < l; b++) mo[a * l + b] -= theta[i * la + a] * theta[i * la + b] * inv;
        }
        nObs = n - miss.length;
        if (l > 0) {
          chol = cholesky(mo, l);
          minv = invertFromCholesky(chol, l);
          logDet += choleskyLogDet(chol, l) - logDetMFull;
        }
      }
      // ẑ = M_O⁻¹ Bᵀ d (missing entries of d are zero, so Bᵀ d only sees observed assets)
      for (let a = 0; a < l; a++) {
        let s = 0;
        for (let b = 0; b < l; b++) s += minv[a * l + b] * y[r * l + b];
        zr[a] = s;
      }
      let quad = 0;
      for (let i = 0; i < n; i++) if (observed[r * n + i]) quad += (d[r * n + i] * d[r * n + i]) / psi[i];
      for (let a = 0; a < l; a++) quad -= zr[a] * y[r * l + a]; // ẑᵀ M_O ẑ = ẑᵀ Bᵀd
      if (nObs > 0) ll += w * -0.5 * (nObs * LOG_2PI + logDet + quad);
      // E[z̃z̃ᵀ]
      for (let a = 0; a < l; a++) {
        for (let b = 0; b < l; b++) ezz[a * la + b] += w * (minv[a * l + b] + zr[a] * zr[b]);
        if (estimateMean) {
          ezz[a * la + l] += w * zr[a];
          ezz[l * la + a] += w * zr[a];
        }
        zhat[r * la + a] = w * zr[a];
      }
      if (estimateMean) {
        ezz[l * la + l] += w;
        zhat[r * la + l] = w;
      }
      // missing entries: E[x z̃ᵀ] = Λ_i E[z̃z̃ᵀ]_t, E[x²] = ψ_i + Λ_i E[z̃z̃ᵀ]_t Λ_iᵀ
      for (const i of miss) {
        const li = theta.subarray(i * la, i * la + la);
        let mu = 0;
        for (let a = 0; a < l; a++) mu += li[a] * zr[a];
        if (estimateMean) mu += li[l];
        // E[x z_a] = Σ_b w_ib (V + ẑẑᵀ)_ba + μ_i ẑ_a
        let ex2 = psi[i] + mu * mu;
        for (let a = 0; a < l; a++) {
          let s = 0;
          for (let b = 0; b < l; b++) s += li[b] * minv[b * l + a];
          ex2 += s * li[a];
          acc[i * la + a] += w * (s + mu * zr[a]);
        }
        if (estimateMean) acc[i * la + l] += w * mu;
        sq[i] += w * ex2;
      }
    }
    // observed part of A: Σ_t x0_ti (w_t z̃_t)ᵀ = X0ᵀ · Ẑw  (N × la)
    const x0t = transpose(x0, t, n);
    const zt = transpose(zhat, t, la);
    const obsPart = multiplyABt(x0t, n, t, zt, la);
    for (let k = 0; k < n * la; k++) acc[k] += obsPart[k];
    for (let r = 0; r < t; r++) {
      const w = weights[r];
      for (let i = 0; i < n; i++) if (observed[r * n + i]) sq[i] += w * x0[r * n + i] * x0[r * n + i];
    }
    // M-step
    const ezzInv = invertFromCholesky(cholesky(ezz, la), la);
    const next = new Float64Array(size);
    let maxChange = 0;
    let psiMean = 0;
    for (let i = 0; i < n; i++) {
      let explained = 0;
      for (let k = 0; k < la; k++) {
        let s = 0;
        for (let a = 0; a < la; a++) s += acc[i * la + a] * ezzInv[a * la + k];
        next[i * la + k] = s;
        explained += s * acc[i * la + k];
      }
      const p = sq[i] - explained;
      next[n * la + i] = p;
      psiMean += p / n;
    }
    for (let i = 0; i < n; i++) {
      const p = Math.max(isotropic ? psiMean : next[n * la + i], floor[i]);
      next[n * la + i] = p;
      maxChange = Math.max(maxChange, Math.abs(p - psi[i]) / psi[i]);
    }
    return { next, logLikelihood: t * ll, maxRelativeChange: maxChange };
  };

  const result = squarem(
    theta0,
    step,
    {
      tolerance: options.tolerance ?? 1e-12,
      parameterTolerance: options.parameterTolerance ?? 1e-7,
      maxEvaluations: options.maxEvaluations ?? 20000,
      accelerate: true,
      project: (x) => {
        if (isotropic) {
          let m = 0;
          for (let i = 0; i < n; i++) m += x[n * la + i] / n;
          for (let i = 0; i < n; i++) x[n * la + i] = m;
        }
        for (let i = 0; i < n; i++) x[n * la + i] = Math.max(x[n * la + i], floor[i]);
      },
      stage: options.method === 'fa' ? 'factor-analysis-missing' : 'ppca-missing',
    },
    control,
  );
  const theta = result.theta;
  const w = new Float64Array(n * l);
  const mean = new Float64Array(n);
  const psi = Float64Array.from(theta.subarray(n * la));
  for (let i = 0; i < n; i++) {
    for (let k = 0; k < l; k++) w[i * l + k] = theta[i * la + k];
    if (estimateMean) mean[i] = theta[i * la + l];
  }
  return {
    loadings: canonicalLoadings(w, psi, n, l),
    specificVariance: psi,
    mean,
    logLikelihood: result.logLikelihood,
    trace: result.trace,
    iterations: result.iterations,
    evaluations: result.evaluations,
    converged: result.converged,
    heywood: Array.from(psi, (p, i) => p <= floor[i] * (1 + 1e-9)),
    missingEntries,
    incompleteDates,
    effectiveSampleSize: effectiveSampleSize(weights),
    observedPerAsset,
  };
}
