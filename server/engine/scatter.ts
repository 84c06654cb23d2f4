/**
 * The weighted second-moment matrix S = Σ_t w_t (x_t − m)(x_t − m)ᵀ (weights summing to one: the 1/T
 * maximum-likelihood convention of scikit-learn's FactorAnalysis and LedoitWolf) held either as the scaled,
 * centred data Z (rows √w_t (x_t − m), so S = ZᵀZ) or as a dense N × N matrix, whichever is cheaper to apply.
 *
 * Factor models only ever need S applied to a thin block (S·B with B N × L), its diagonal and its trace:
 * applying through the data costs 4·T·N·L flops, through a dense S 2·N²·L flops after N²·T to form it.
 */
import { transpose } from './linalg/dense';
import { parallelMultiplyABt, sharedFloat64 } from './linalg/parallel';
import type { SymmetricOperator } from './linalg/eigen';
import type { MeanHandling, ReturnsPanel, Weighting } from './types';
import { effectiveSampleSize, observationWeights } from './weights';

export interface Scatter extends SymmetricOperator {
  /** N. */
  size: number;
  observations: number;
  /** diag(S). */
  diagonal: Float64Array;
  trace: number;
  mean: Float64Array;
  weights: Float64Array;
  effectiveSampleSize: number;
  /** Z (T × N) and Zᵀ (N × T), when held in data form. */
  data?: { z: Float64Array; zt: Float64Array };
  /** Dense S (N × N), when formed. */
  dense?: Float64Array;
}

/** Throws unless the panel is complete (no NaN) and well-shaped. */
export function assertCompletePanel(panel: ReturnsPanel): void {
  const { values, observations: t, assets: n } = panel;
  if (values.length !== t * n) throw new Error(`panel has ${values.length} values, expected ${t} × ${n}`);
  for (let k = 0; k < values.length; k++) {
    if (!Number.isFinite(values[k])) {
      throw new Error(`panel value at row ${Math.floor(k / n) + 1}, asset ${(k % n) + 1} is missing or not finite`);
    }
  }
}

export function panelHasMissing(panel: ReturnsPanel): boolean {
  for (let k = 0; k < panel.values.length; k++) if (Number.isNaN(panel.values[k])) return true;
  return false;
}

/** Weighted mean of each column over its observed entries (zero for mean 'zero'). */
export function weightedMean(panel: ReturnsPanel, weights: Float64Array, mean: MeanHandling): Float64Array {
  const { values, observations: t, assets: n } = panel;
  const m = new Float64Array(n);
  if (mean === 'zero') return m;
  const wsum = new Float64Array(n);
  for (let r = 0; r < t; r++) {
    const w = weights[r];
    const row = r * n;
    for (let i = 0; i < n; i++) {
      const x = values[row + i];
      if (Number.isNaN(x)) continue;
      m[i] += w * x;
      wsum[i] += w;
    }
  }
  for (let i = 0; i < n; i++) m[i] = wsum[i] > 0 ? m[i] / wsum[i] : 0;
  return m;
}

export interface ScatterOptions {
  weighting?: Weighting;
  mean?: MeanHandling;
  /** 'data', 'dense' or 'auto' (pick the cheaper for about `expectedApplications` thin applications). */
  form?: 'data' | 'dense' | 'auto';
  /** Width of the blocks S will be applied to, and how many times (for 'auto'). */
  blockWidth?: number;
  expectedApplications?: number;
}

/** Builds the scatter of a complete panel. */
export function buildScatter(panel: ReturnsPanel, options: ScatterOptions = {}): Scatter {
  assertCompletePanel(panel);
  const { values, observations: t, assets: n } = panel;
  const weights = observationWeights(t, options.weighting);
  const mean = weightedMean(panel, weights, options.mean ?? 'sample');
  const z = sharedFloat64(t * n);
  const diagonal = new Float64Array(n);
  for (let r = 0; r < t; r++) {
    const sw = Math.sqrt(weights[r]);
    const row = r * n;
    for (let i = 0; i < n; i++) {
      const v = sw * (values[row + i] - mean[i]);
      z[row + i] = v;
      diagonal[i] += v * v;
    }
  }
  let traceS = 0;
  for (let i = 0; i < n; i++) traceS += diagonal[i];
  const zt = transpose(z, t, n, sharedFloat64(t * n));
  const base = {
    size: n,
    observations: t,
    diagonal,
    trace: traceS,
    mean,
    weights,
    effectiveSampleSize: effectiveSampleSize(weights),
  };
  const width = options.blockWidth ?? 10;
  const applications = options.expectedApplications ?? 100;
  const form =
    options.form === 'data' || options.form === 'dense'
      ? options.form
      : n * n * t + 2 * n * n * width * applications < 4 * t * n * width * applications
        ? 'dense'
        : 'data';
  if (form === 'dense') {
    const dense = parallelMultiplyABt(zt, n, t, zt, n, true);
    return { ...base, dense, apply: (blockT, k) => parallelMultiplyABt(blockT, k, n, dense, n) };
  }
  return {
    ...base,
    data: { z, zt },
    apply: (blockT, k) => {
      const y = parallelMultiplyABt(blockT, k, n, z, t); // k × T = Bᵀ Zᵀ
      return parallelMultiplyABt(y, k, t, zt, n); // k × N = Bᵀ Zᵀ Z
    },
  };
}

/** Dense S (N × N) of a scatter, forming it from the data if needed. */
export function denseScatter(scatter: Scatter): Float64Array {
  if (scatter.dense) return scatter.dense;
  const { zt } = scatter.data!;
  scatter.dense = parallelMultiplyABt(zt, scatter.size, scatter.observations, zt, scatter.size, true);
  return scatter.dense;
}

/**
 * A scatter from a given covariance or correlation matrix (e.g. a published one) and its number of observations;
 * the matrix is used as the 1/T scatter (ML factor analysis is scale-invariant, so uniquenesses do not depend on it).
 */
export function scatterFromCovariance(covariance: Float64Array, n: number, observations: number): Scatter {
  if (covariance.length !== n * n) throw new Error(`covariance has ${covariance.length} entries, expected ${n} × ${n}`);
  const dense = sharedFloat64(n * n);
  dense.set(covariance);
  const diagonal = new Float64Array(n);
  let traceS = 0;
  for (let i = 0; i < n; i++) {
    diagonal[i] = dense[i * n + i];
    traceS += diagonal[i];
  }
  return {
    size: n,
    observations,
    diagonal,
    trace: traceS,
    mean: new Float64Array(n),
    weights: new Float64Array(observations).fill(1 / observations),
    effectiveSampleSize: observations,
    dense,
    apply: (blockT, k) => parallelMultiplyABt(blockT, k, n, dense, n),
  };
}
