/**
 * Factor scores (the factor return series) of a factor model Σ = W Wᵀ + diag Ψ, date by date.
 * Posterior of z given x (Rubin & Thayer 1982; Tipping & Bishop 1999, eqs. (6)–(7)):
 *   M = I + WᵀΨ⁻¹W,  E[z | x] = M⁻¹ WᵀΨ⁻¹ (x − μ),  Cov[z | x] = M⁻¹.
 * Missing entries: on a date with observed set O the same formulas hold with W, Ψ, x, μ restricted to O
 * (the Gaussian conditional given only the observed coordinates), so M_O = I + W_OᵀΨ_O⁻¹W_O.
 * M_O is built by subtracting the missing rows' terms from the full M when few are missing, else from the observed rows.
 */
import type { FactorModel, ReturnsPanel } from './types';
import { capacitanceMatrix } from './lowRank';
import { choleskySolve, tryCholesky } from './linalg/cholesky';

export interface FactorScores {
  /** T × L posterior means E[z_t | x_t], row-major. */
  scores: Float64Array;
  /** T × L × L posterior covariances M_t⁻¹ (row t at offset t·L²). Rows with no missing data share the same matrix. */
  posteriorCovariances: Float64Array;
  /** Number of observed assets on each date. */
  observedCounts: Int32Array;
  /** Dates with no observed asset: their score is the prior mean 0 with covariance I. */
  emptyRows: number[];
  observations: number;
  factors: number;
}

export function factorScores(model: FactorModel, panel: ReturnsPanel): FactorScores {
  const { assets: n, factors: l, loadings, specificVariance, mean } = model;
  if (panel.assets !== n) throw new Error(`panel has ${panel.assets} assets but the model has ${n}`);
  const t = panel.observations;
  const fullM = capacitanceMatrix(model); // also checks Ψ > 0
  const fullChol = tryCholesky(fullM, l);
  if (!fullChol) throw new Error('I + WᵀΨ⁻¹W is not positive definite');
  const fullCov = inverseFromCholesky(fullChol, l);

  const scores = new Float64Array(t * l);
  const posteriorCovariances = new Float64Array(t * l * l);
  const observedCounts = new Int32Array(t);
  const emptyRows: number[] = [];
  const b = new Float64Array(l);
  const m = new Float64Array(l * l);

  for (let row = 0; row < t; row++) {
    const base = row * n;
    b.fill(0);
    let observed = 0;
    for (let i = 0; i < n; i++) {
      const x = panel.values[base + i];
      if (Number.isNaN(x)) continue;
      observed++;
      const r = (x - mean[i]) / specificVariance[i];
      const wr = i * l;
      for (let k = 0; k < l; k++) b[k] += loadings[wr + k] * r;
    }
    observedCounts[row] = observed;
    const covOut = row * l * l;
    if (observed === 0) {
      emptyRows.push(row);
      for (let k = 0; k < l; k++) posteriorCovariances[covOut + k * l + k] = 1;
      continue;
    }
    let chol: Float64Array | null;
    if (observed === n) {
      chol = fullChol;
      posteriorCovariances.set(fullCov, covOut);
    } else {
      const missing = n - observed;
      if (missing <= observed) {
        m.set(fullM);
        accumulateOuter(m, model, panel.values, base, true, -1);
      } else {
        m.fill(0);
        for (let k = 0; k < l; k++) m[k * l + k] = 1;
        accumulateOuter(m, model, panel.values, base, false, 1);
      }
      chol = tryCholesky(m, l);
      if (!chol) throw new Error(`posterior precision on date ${row} is not positive definite`);
      posteriorCovariances.set(inverseFromCholesky(chol, l), covOut);
    }
    const z = choleskySolve(chol, l, b.slice(), 1);
    scores.set(z, row * l);
  }
  return { scores, posteriorCovariances, observedCounts, emptyRows, observations: t, factors: l };
}

/** m += sign · Σ_{i in set} wᵢwᵢᵀ/Ψᵢ, where the set is the missing (wantMissing) or the observed assets of one date. */
function accumulateOuter(m: Float64Array, model: FactorModel, values: Float64Array, base: number, wantMissing: boolean, sign: number): void {
  const { assets: n, factors: l, loadings, specificVariance } = model;
  for (let i = 0; i < n; i++) {
    if (Number.isNaN(values[base + i]) !== wantMissing) continue;
    const inv = sign / specificVariance[i];
    const wr = i * l;
    for (let a = 0; a < l; a++) {
      const wa = loadings[wr + a] * inv;
      for (let c = 0; c < l; c++) m[a * l + c] += wa * loadings[wr + c];
    }
  }
}

/** M⁻¹ from the Cholesky factor of M (L × L), symmetrised against rounding. */
function inverseFromCholesky(chol: Float64Array, l: number): Float64Array {
  const inv = new Float64Array(l * l);
  for (let k = 0; k < l; k++) inv[k * l + k] = 1;
  choleskySolve(chol, l, inv, l);
  for (let a = 0; a < l; a++) {
    for (let c = 0; c < a; c++) {
      const v = 0.5 * (inv[a * l + c] + inv[c * l + a]);
      inv[a * l + c] = v;
      inv[c * l + a] = v;
    }
  }
  return inv;
}
