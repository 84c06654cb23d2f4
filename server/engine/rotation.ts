/**
 * Rotation-invariant summaries of a factor model Σ = W Wᵀ + diag Ψ.
 * The Gaussian likelihood depends on W only through W Wᵀ, so W → W R (R orthogonal) changes nothing
 * (Lawley & Maxwell 1971, section 2.3). Communalities, specific shares, implied correlations and the
 * subspace spanned by the loadings are invariant; single loadings columns are not.
 */
import type { CovarianceModel, FactorModel } from './types';
import { orthonormalBasis, singularValues } from './jacobiSvd';
import { multiply, multiplyAtB, transpose } from './linalg/dense';

/** Communalities hᵢ = Σₖ Wᵢₖ² (Harman 1976, eq. 2.13): the variance of asset i explained by the factors. */
export function communalities(model: FactorModel): Float64Array {
  const { assets: n, factors: l, loadings } = model;
  const h = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let s = 0;
    for (let k = 0; k < l; k++) s += loadings[i * l + k] ** 2;
    h[i] = s;
  }
  return h;
}

/** Specific share Ψᵢ / (hᵢ + Ψᵢ) (the uniqueness of a standardised variable; Harman 1976, eq. 2.14). */
export function specificShares(model: FactorModel): Float64Array {
  const h = communalities(model);
  const out = new Float64Array(model.assets);
  for (let i = 0; i < model.assets; i++) {
    const total = h[i] + model.specificVariance[i];
    out[i] = total > 0 ? model.specificVariance[i] / total : NaN;
  }
  return out;
}

function covarianceEntry(model: CovarianceModel, i: number, j: number): number {
  if (model.kind === 'dense') return model.covariance[i * model.assets + j];
  const l = model.factors;
  let s = 0;
  for (let k = 0; k < l; k++) s += model.loadings[i * l + k] * model.loadings[j * l + k];
  if (i === j) s += model.specificVariance[i];
  return s;
}

function assertAsset(model: CovarianceModel, i: number): void {
  if (!(Number.isInteger(i) && i >= 0 && i < model.assets)) throw new Error(`asset index ${i} is out of range 0…${model.assets - 1}`);
}

/** Implied correlation ρᵢⱼ = Σᵢⱼ / √(Σᵢᵢ Σⱼⱼ) with Σ = W Wᵀ + Ψ (or the dense Σ). O(L) per pair for factor models. */
export function impliedCorrelation(model: CovarianceModel, i: number, j: number): number {
  assertAsset(model, i);
  assertAsset(model, j);
  if (i === j) return 1;
  return covarianceEntry(model, i, j) / Math.sqrt(covarianceEntry(model, i, i) * covarianceEntry(model, j, j));
}

/** Implied correlations for a list of pairs (on demand, for large N). */
export function impliedCorrelations(model: CovarianceModel, pairs: readonly (readonly [number, number])[]): Float64Array {
  return Float64Array.from(pairs.map(([i, j]) => impliedCorrelation(model, i, j)));
}

/** Largest N for which the full implied correlation matrix is produced (N² doubles). */
export const FULL_CORRELATION_LIMIT = 1000;

/** The full N × N implied correlation matrix, for small N only (use impliedCorrelations for chosen pairs otherwise). */
export function impliedCorrelationMatrix(model: CovarianceModel, limit = FULL_CORRELATION_LIMIT): Float64Array {
  const n = model.assets;
  if (n > limit) throw new Error(`${n} assets exceed the limit of ${limit} for a full correlation matrix; ask for chosen pairs instead`);
  const sd = new Float64Array(n);
  for (let i = 0; i < n; i++) sd[i] = Math.sqrt(covarianceEntry(model, i, i));
  const out = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    out[i * n + i] = 1;
    for (let j = 0; j < i; j++) {
      const r = covarianceEntry(model, i, j) / (sd[i] * sd[j]);
      out[i * n + j] = r;
      out[j * n + i] = r;
    }
  }
  return out;
}

/**
 * Principal angles between the column spaces of A (n × la) and B (n × lb), ascending, in radians
 * (Björck & Golub 1973): orthonormalise each (Q_A, Q_B), then cos θₖ are the singular values of Q_Aᵀ Q_B.
 * Angles below 45° are taken from the sines instead — the singular values of Q_B − Q_A(Q_AᵀQ_B) — which keeps
 * small angles accurate (Knyazev & Argentati 2002, Algorithm 3.1; also what scipy.linalg.subspace_angles does).
 * There are min(rank A, rank B) angles. 0 means a shared direction, π/2 an orthogonal one.
 */
export function principalAngles(a: Float64Array, b: Float64Array, n: number, la: number, lb: number): Float64Array {
  if (a.length !== n * la || b.length !== n * lb) throw new Error('principalAngles: matrix sizes do not match n × l');
  const { basis: qa, rank: ka } = orthonormalBasis(a, n, la);
  const { basis: qb, rank: kb } = orthonormalBasis(b, n, lb);
  const r = Math.min(ka, kb);
  if (r === 0) return new Float64Array(0);
  const c = multiplyAtB(qa, n, ka, qb, kb); // ka × kb
  const cosines = singularValues(c, ka, kb); // descending: cos of ascending angles
  // Residual of the larger basis' complement: its singular values are the sines.
  let residual: Float64Array;
  let cols: number;
  if (ka >= kb) {
    const proj = multiply(qa, n, ka, c, kb);
    residual = qb.slice();
    for (let j = 0; j < residual.length; j++) residual[j] -= proj[j];
    cols = kb;
  } else {
    const proj = multiply(qb, n, kb, transpose(c, ka, kb), ka);
    residual = qa.slice();
    for (let j = 0; j < residual.length; j++) residual[j] -= proj[j];
    cols = ka;
  }
  const sines = singularValues(residual, n, cols); // descending: sin of descending angles
  const angles = new Float64Array(r);
  for (let k = 0; k < r; k++) {
    const cosK = Math.min(1, cosines[k]);
    const sinK = Math.min(1, sines[r - 1 - k]);
    angles[k] = cosK * cosK >= 0.5 ? Math.asin(sinK) : Math.acos(cosK);
  }
  return angles;
}

/** Principal angles between the loading subspaces of two factor models on the same assets (stability across windows/estimators). */
export function loadingSubspaceAngles(first: FactorModel, second: FactorModel): Float64Array {
  if (first.assets !== second.assets) throw new Error(`models cover different numbers of assets (${first.assets} vs ${second.assets})`);
  return principalAngles(first.loadings, second.loadings, first.assets, first.factors, second.factors);
}

export interface VarimaxOptions {
  /** Kaiser normalisation: rotate the row-normalised loadings W_i/√hᵢ (default true, as in Kaiser 1958 and R's varimax). */
  normalize?: boolean;
  /** Stop when every pairwise rotation angle of a sweep is below this, in radians (default 1e-12). */
  tolerance?: number;
  /** Maximum number of sweeps over all pairs of factors (default 500). */
  maxIterations?: number;
}

export interface VarimaxResult {
  /** An interpretation aid only: the rotated loadings fit exactly as well as the unrotated ones. */
  label: 'interpretation aid';
  /** W R, N × L row-major; columns ordered by decreasing sum of squares, each column's largest-magnitude loading positive. */
  loadings: Float64Array;
  /** The orthogonal L × L rotation R (row-major) with rotated = W R. */
  rotation: Float64Array;
  /** Kaiser's varimax criterion Σₖ [N Σᵢ bᵢₖ⁴ − (Σᵢ bᵢₖ²)²] / N² on the (normalised) rotated loadings. */
  criterion: number;
  /** Sweeps over all pairs of factors. */
  iterations: number;
  converged: boolean;
  normalized: boolean;
}

/**
 * Varimax rotation (Kaiser 1958, "The varimax criterion for analytic rotation in factor analysis", Psychometrika 23):
 * maximises V = Σₖ [N Σᵢ bᵢₖ⁴ − (Σᵢ bᵢₖ²)²]/N² by sweeps of plane rotations, each the exact maximiser for one pair
 * of columns (x, y): with uᵢ = xᵢ² − yᵢ², vᵢ = 2xᵢyᵢ, A = Σu, B = Σv, C = Σ(u² − v²), D = 2Σuv,
 * tan 4φ = (D − 2AB/N) / (C − (A² − B²)/N) (Kaiser 1958, eq. (20); Harman 1976, section 14.4).
 * Pairwise sweeps increase V monotonically, so the iteration cannot cycle (the SVD-based fixed-point form can, on
 * exactly symmetric structures). An interpretation aid, labelled as such: W Wᵀ and every risk figure are unchanged.
 */
export function varimax(loadings: Float64Array, n: number, l: number, options: VarimaxOptions = {}): VarimaxResult {
  if (loadings.length !== n * l) throw new Error('varimax: loadings size does not match n × l');
  const normalize = options.normalize ?? true;
  const tolerance = options.tolerance ?? 1e-12;
  const maxIterations = options.maxIterations ?? 500;
  const x = loadings.slice();
  const scale = new Float64Array(n).fill(1);
  if (normalize) {
    for (let i = 0; i < n; i++) {
      let s = 0;
      for (let k = 0; k < l; k++) s += x[i * l + k] ** 2;
      scale[i] = s > 0 ? Math.sqrt(s) : 1;
      for (let k = 0; k < l; k++) x[i * l + k] /= scale[i];
    }
  }
  const rotation: Float64Array = new Float64Array(l * l);
  for (let k = 0; k < l; k++) rotation[k * l + k] = 1;
  const current = x.slice(); // x · rotation, kept up to date
  let iterations = 0;
  let converged = l <= 1;
  while (!converged && iterations < maxIterations) {
    iterations++;
    let largest = 0;
    for (let p = 0; p < l - 1; p++) {
      for (let q = p + 1; q < l; q++) {
        let a = 0;
        let b = 0;
        let c = 0;
        let d = 0;
        for (let i = 0; i < n; i++) {
          const xi = current[i * l + p];
          const yi = current[i * l + q];
          const u = xi * xi - yi * yi;
          const v = 2 * xi * yi;
          a += u;
          b += v;
          c += u * u - v * v;
          d += 2 * u * v;
        }
        const phi = Math.atan2(d - (2 * a * b) / n, c - (a * a - b * b) / n) / 4;
        if (Math.abs(phi) <= tolerance) continue;
        largest = Math.max(largest, Math.abs(phi));
        const cos = Math.cos(phi);
        const sin = Math.sin(phi);
        for (let i = 0; i < n; i++) {
          const xi = current[i * l + p];
          const yi = current[i * l + q];
          current[i * l + p] = xi * cos + yi * sin;
          current[i * l + q] = -xi * sin + yi * cos;
        }
        for (let r = 0; r < l; r++) {
          const xr = rotation[r * l + p];
          const yr = rotation[r * l + q];
          rotation[r * l + p] = xr * cos + yr * sin;
          rotation[r * l + q] = -xr * sin + yr * cos;
        }
      }
    }
    if (largest <= tolerance) converged = true;
  }
  const rotatedNormalised = multiply(x, n, l, rotation, l);
  const criterion = varimaxCriterion(rotatedNormalised, n, l);
  const rotated = rotatedNormalised;
  for (let i = 0; i < n; i++) for (let k = 0; k < l; k++) rotated[i * l + k] *= scale[i];
  // Deterministic presentation: columns by decreasing sum of squares, sign so the largest-magnitude loading is positive.
  const ss = new Float64Array(l);
  for (let i = 0; i < n; i++) for (let k = 0; k < l; k++) ss[k] += rotated[i * l + k] ** 2;
  const order = Array.from({ length: l }, (_, k) => k).sort((p, q) => ss[q] - ss[p] || p - q);
  const outLoadings = new Float64Array(n * l);
  const outRotation = new Float64Array(l * l);
  order.forEach((src, dst) => {
    let best = 0;
    for (let i = 0; i < n; i++) if (Math.abs(rotated[i * l + src]) > Math.abs(best)) best = rotated[i * l + src];
    const sign = best < 0 ? -1 : 1;
    for (let i = 0; i < n; i++) outLoadings[i * l + dst] = sign * rotated[i * l + src];
    for (let r = 0; r < l; r++) outRotation[r * l + dst] = sign * rotation[r * l + src];
  });
  return { label: 'interpretation aid', loadings: outLoadings, rotation: outRotation, criterion, iterations, converged, normalized: normalize };
}

/** Kaiser's (1958) raw varimax criterion V = Σₖ [N Σᵢ bᵢₖ⁴ − (Σᵢ bᵢₖ²)²] / N² for an N × L matrix B. */
export function varimaxCriterion(b: Float64Array, n: number, l: number): number {
  let v = 0;
  for (let k = 0; k < l; k++) {
    let s2 = 0;
    let s4 = 0;
    for (let i = 0; i < n; i++) {
      const sq = b[i * l + k] ** 2;
      s2 += sq;
      s4 += sq * sq;
    }
    v += (n * s4 - s2 * s2) / (n * n);
  }
  return v;
}

export interface RotationCheck {
  /** max |(WWᵀ)ᵢⱼ − (WR(WR)ᵀ)ᵢⱼ| over all i, j. */
  maxAbsDifference: number;
  /** maxAbsDifference / max |(WWᵀ)ᵢⱼ|. */
  relativeDifference: number;
  /** max |RᵀR − I|: how far R is from orthogonal. */
  orthogonalityError: number;
  /** true when both are below the tolerance. */
  invariant: boolean;
}

/**
 * Checks that W → W R leaves W Wᵀ unchanged (R orthogonal, L × L row-major). Compares all N² entries explicitly
 * (O(N²·L)); for N in the low thousands this takes well under a second.
 */
export function checkRotationInvariance(loadings: Float64Array, n: number, l: number, rotation: Float64Array, tolerance = 1e-12): RotationCheck {
  if (rotation.length !== l * l) throw new Error(`rotation must be ${l} × ${l}`);
  let orthogonalityError = 0;
  for (let a = 0; a < l; a++) {
    for (let b = 0; b < l; b++) {
      let s = 0;
      for (let r = 0; r < l; r++) s += rotation[r * l + a] * rotation[r * l + b];
      orthogonalityError = Math.max(orthogonalityError, Math.abs(s - (a === b ? 1 : 0)));
    }
  }
  const rotated = multiply(loadings, n, l, rotation, l);
  let maxAbs = 0;
  let maxEntry = 0;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j <= i; j++) {
      let s1 = 0;
      let s2 = 0;
      for (let k = 0; k < l; k++) {
        s1 += loadings[i * l + k] * loadings[j * l + k];
        s2 += rotated[i * l + k] * rotated[j * l + k];
      }
      maxEntry = Math.max(maxEntry, Math.abs(s1));
      maxAbs = Math.max(maxAbs, Math.abs(s1 - s2));
    }
  }
  const relativeDifference = maxEntry > 0 ? maxAbs / maxEntry : maxAbs;
  return { maxAbsDifference: maxAbs, relativeDifference, orthogonalityError, invariant: relativeDifference <= tolerance && orthogonalityError <= tolerance };
}
