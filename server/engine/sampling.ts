/**
 * Generative sampling from a fitted covariance model (seeded, deterministic).
 * Factor models (Lawley & Maxwell 1971; Tipping & Bishop 1999, eq. (2)): x = μ + W z + ε,
 * z ~ N(0, I_L), ε ~ N(0, diag Ψ) — O(N·L) per draw, never forming N × N.
 * Dense models: x = μ + C z with Σ = C Cᵀ (Cholesky; for a semidefinite Σ, columns whose pivot vanishes are
 * set to zero, which samples exactly from N(μ, Σ) restricted to its support).
 */
import { createRandom, type Random } from './random';
import type { CovarianceModel, ReturnsPanel } from './types';

export interface SamplingOptions {
  /** Number of dates to draw (T). */
  observations: number;
  /** Seed for a fresh generator; ignored when `random` is given. */
  seed?: number;
  /** An existing generator, so that several chunks continue one stream. */
  random?: Random;
}

function generatorFor(options: SamplingOptions): Random {
  if (options.random) return options.random;
  if (options.seed === undefined) throw new Error('sampling needs a seed (or a generator) so that draws are reproducible');
  return createRandom(options.seed);
}

/** Draws a T × N returns panel from the model's Gaussian generative form. */
export function sampleReturns(model: CovarianceModel, options: SamplingOptions): ReturnsPanel {
  const t = options.observations;
  if (!(Number.isInteger(t) && t >= 0)) throw new Error(`observations must be a non-negative integer, got ${t}`);
  const rng = generatorFor(options);
  const n = model.assets;
  const values = new Float64Array(t * n);
  if (model.kind === 'factor') {
    const { factors: l, loadings, specificVariance, mean } = model;
    const sd = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      if (!(specificVariance[i] >= 0)) throw new Error(`specific variance of asset ${i} is negative or not a number`);
      sd[i] = Math.sqrt(specificVariance[i]);
    }
    const z = new Float64Array(l);
    for (let row = 0; row < t; row++) {
      rng.fillNormal(z);
      const base = row * n;
      for (let i = 0; i < n; i++) {
        let x = mean[i];
        const r = i * l;
        for (let k = 0; k < l; k++) x += loadings[r + k] * z[k];
        values[base + i] = x + sd[i] * rng.normal();
      }
    }
  } else {
    const c = semidefiniteCholesky(model.covariance, n);
    const z = new Float64Array(n);
    for (let row = 0; row < t; row++) {
      rng.fillNormal(z);
      const base = row * n;
      for (let i = 0; i < n; i++) {
        let x = model.mean[i];
        const r = i * n;
        for (let k = 0; k <= i; k++) x += c[r + k] * z[k];
        values[base + i] = x;
      }
    }
  }
  return { values, observations: t, assets: n };
}

/**
 * Lower factor C with C Cᵀ = Σ for a positive semidefinite Σ (Golub & Van Loan 2013, Algorithm 4.2.1,
 * with pivots below 1e-14 · max diag treated as zero, as in Higham 2002, section 10.3, for semidefinite matrices).
 */
export function semidefiniteCholesky(sigma: Float64Array, n: number): Float64Array {
  const c = new Float64Array(n * n);
  let maxDiag = 0;
  for (let i = 0; i < n; i++) maxDiag = Math.max(maxDiag, sigma[i * n + i]);
  const tol = 1e-14 * maxDiag;
  for (let j = 0; j < n; j++) {
    let d = sigma[j * n + j];
    for (let k = 0; k < j; k++) d -= c[j * n + k] * c[j * n + k];
    if (d < -1e-8 * Math.max(maxDiag, 1e-300)) throw new Error('covariance is not positive semidefinite; cannot sample from it');
    if (d <= tol) continue; // zero column
    const cjj = Math.sqrt(d);
    c[j * n + j] = cjj;
    for (let i = j + 1; i < n; i++) {
      let s = sigma[i * n + j];
      for (let k = 0; k < j; k++) s -= c[i * n + k] * c[j * n + k];
      c[i * n + j] = s / cjj;
    }
  }
  return c;
}
