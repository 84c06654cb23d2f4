/**
 * Shared data shapes of the estimation engine. The engine is pure: arrays in, numbers out,
 * no I/O, no database, no Express. Matrices are row-major Float64Arrays.
 */

/** A returns panel: T dates (rows) × N assets (columns), row-major, NaN where missing. */
export interface ReturnsPanel {
  /** T × N values, row-major: values[t * assets + i]. */
  values: Float64Array;
  observations: number; // T
  assets: number; // N
}

/** How observations are weighted in time. */
export type Weighting =
  | { kind: 'equal' }
  /** Exponential weights w_t ∝ λ^(T−1−t) with λ = 0.5^(1/halfLife) (common practice in risk models). */
  | { kind: 'exponential'; halfLife: number };

/** Sample mean, or zero mean (common practice for daily risk). */
export type MeanHandling = 'sample' | 'zero';

export interface EstimationOptions {
  weighting?: Weighting;
  mean?: MeanHandling;
}

/**
 * A low-rank-plus-diagonal covariance: Σ = W Wᵀ + diag(Ψ).
 * Factor analysis has a free diagonal Ψ; probabilistic PCA has Ψ = σ² 1.
 */
export interface FactorModel {
  kind: 'factor';
  method: 'fa' | 'ppca';
  assets: number; // N
  factors: number; // L
  mean: Float64Array; // N
  /** N × L, row-major, canonical orientation. */
  loadings: Float64Array;
  /** N specific variances Ψᵢ (σ² repeated for PPCA). */
  specificVariance: Float64Array;
}

/** A full covariance matrix (sample, Ledoit–Wolf, …). */
export interface DenseCovarianceModel {
  kind: 'dense';
  method: 'sample' | 'ledoit-wolf';
  assets: number; // N
  mean: Float64Array; // N
  /** N × N, row-major, symmetric positive semidefinite. */
  covariance: Float64Array;
}

export type CovarianceModel = FactorModel | DenseCovarianceModel;

/** Reported by long fits so that the worker can show progress and cancel. */
export interface FitProgress {
  stage: string;
  iteration: number;
  logLikelihood?: number;
}

export interface FitControl {
  /** Called now and then during a fit; throw (e.g. a cancellation error) to stop it. */
  onProgress?: (progress: FitProgress) => void;
}
