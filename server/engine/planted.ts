/**
 * Invented planted-factor return panels with a known true covariance, for tests, benchmarks and the demo.
 * (Invented data: never a substitute for a reference check against an outside library.)
 *
 * r_t = μ + B f_t + ε_t with f_t ~ N(0, I_K) and ε_t,i = sqrt(Ψ_i) · e_t,i, e Gaussian or unit-variance Student-t,
 * so the true covariance is Σ = B Bᵀ + diag(Ψ). Scales resemble daily equity returns: a market factor with
 * loadings around 1 % per day, weaker industry/style factors, specific volatility 0.8–2.5 % per day.
 */
import { createRandom } from './random';
import type { ReturnsPanel } from './types';

export interface PlantedPanelOptions {
  assets: number; // N
  observations: number; // T
  factors: number; // K, true number of factors
  seed: number;
  noise?: 'gaussian' | 'student-t';
  /** Degrees of freedom of the Student-t noise and factor returns (default 5). */
  degreesOfFreedom?: number;
  /** Share of entries hidden as NaN, scattered at random (default 0). */
  missingShare?: number;
  /** Share of assets listed late: their first 10–40 % of dates are NaN (default 0). */
  lateListingShare?: number;
  /** Mean return per period (default 0.0003, about 7.5 % a year at 252 periods). */
  meanReturn?: number;
}

export interface PlantedPanel {
  panel: ReturnsPanel;
  /** The complete panel before any entries were hidden. */
  complete: ReturnsPanel;
  /** True loadings B, N × K row-major. */
  loadings: Float64Array;
  /** True specific variances Ψ (N). */
  specificVariance: Float64Array;
  /** True mean μ (N). */
  mean: Float64Array;
  /** The factor returns f_t actually drawn, T × K. */
  factorReturns: Float64Array;
  /** Number of entries hidden as NaN. */
  hiddenEntries: number;
}

export function plantedPanel(options: PlantedPanelOptions): PlantedPanel {
  const { assets: n, observations: t, factors: k, seed } = options;
  if (!(Number.isInteger(n) && n >= 1)) throw new Error(`assets must be a positive integer, got ${n}`);
  if (!(Number.isInteger(t) && t >= 1)) throw new Error(`observations must be a positive integer, got ${t}`);
  if (!(Number.isInteger(k) && k >= 0)) throw new Error(`factors must be a non-negative integer, got ${k}`);
  const noise = options.noise ?? 'gaussian';
  const nu = options.degreesOfFreedom ?? 5;
  const rng = createRandom(seed);
  const draw = noise === 'student-t' ? () => rng.studentT(nu) : () => rng.normal();

  const loadings = new Float64Array(n * k);
  for (let i = 0; i < n; i++) {
    for (let f = 0; f < k; f++) {
      if (f === 0) loadings[i * k] = 0.01 * (0.5 + rng.uniform()); // market: all positive, 0.5–1.5 %
      else loadings[i * k + f] = (0.006 / Math.sqrt(f)) * rng.normal(); // weaker, decaying factors
    }
  }
  const specificVariance = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const vol = 0.008 + 0.017 * rng.uniform();
    specificVariance[i] = vol * vol;
  }
  const mean = new Float64Array(n).fill(options.meanReturn ?? 0.0003);

  const factorReturns = new Float64Array(t * k);
  for (let j = 0; j < t * k; j++) factorReturns[j] = draw();

  const values = new Float64Array(t * n);
  for (let row = 0; row < t; row++) {
    for (let i = 0; i < n; i++) {
      let x = mean[i];
      for (let f = 0; f < k; f++) x += loadings[i * k + f] * factorReturns[row * k + f];
      values[row * n + i] = x + Math.sqrt(specificVariance[i]) * draw();
    }
  }
  const complete: ReturnsPanel = { values: values.slice(), observations: t, assets: n };

  let hidden = 0;
  const late = options.lateListingShare ?? 0;
  if (late > 0) {
    for (let i = 0; i < n; i++) {
      if (rng.uniform() >= late) continue;
      const start = Math.floor(t * (0.1 + 0.3 * rng.uniform()));
      for (let row = 0; row < start; row++) {
        if (!Number.isNaN(values[row * n + i])) hidden++;
        values[row * n + i] = NaN;
      }
    }
  }
  const share = options.missingShare ?? 0;
  if (share > 0) {
    for (let j = 0; j < t * n; j++) {
      if (rng.uniform() < share && !Number.isNaN(values[j])) {
        values[j] = NaN;
        hidden++;
      }
    }
  }
  return {
    panel: { values, observations: t, assets: n },
    complete,
    loadings,
    specificVariance,
    mean,
    factorReturns,
    hiddenEntries: hidden,
  };
}

/** The true covariance B Bᵀ + diag(Ψ) of a planted panel (N × N; for small N only). */
export function plantedCovariance(planted: PlantedPanel): Float64Array {
  const n = planted.specificVariance.length;
  const k = n === 0 ? 0 : planted.loadings.length / n;
  const sigma = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j <= i; j++) {
      let s = 0;
      for (let f = 0; f < k; f++) s += planted.loadings[i * k + f] * planted.loadings[j * k + f];
      if (i === j) s += planted.specificVariance[i];
      sigma[i * n + j] = s;
      sigma[j * n + i] = s;
    }
  }
  return sigma;
}
