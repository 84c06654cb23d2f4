/**
 * Symmetric eigenproblems.
 *
 * - `symmetricEigen`: all eigenpairs of a small symmetric matrix by the cyclic Jacobi method (Golub & Van Loan,
 *   Matrix Computations, 4th ed., §8.5), used for L × L and Krylov projections (at most a few hundred rows).
 * - `topEigenpairs`: the k largest eigenpairs of a large symmetric positive-semidefinite operator by a restarted
 *   block Krylov method (block Lanczos with full reorthogonalisation and Rayleigh–Ritz extraction; Golub &
 *   Underwood 1977, Saad 2011 "Numerical methods for large eigenvalue problems" §6). Never forms a full N × N
 *   decomposition. Deterministic: the start block comes from a seeded generator.
 */
import { createRandom } from '../random';
import { multiplyABt, transpose } from './dense';

export interface EigenResult {
  /** Eigenvalues in decreasing order. */
  values: Float64Array;
  /** Eigenvectors as columns of an n × k row-major matrix, in the same order. */
  vectors: Float64Array;
}

/** All eigenpairs of a symmetric n × n matrix (cyclic Jacobi), sorted by decreasing eigenvalue. */
export function symmetricEigen(input: Float64Array, n: number): EigenResult {
  const a = Float64Array.from(input.subarray(0, n * n));
  const v = new Float64Array(n * n);
  for (let i = 0; i < n; i++) v[i * n + i] = 1;
  let scale = 0;
  for (let i = 0; i < n * n; i++) scale += a[i] * a[i];
  for (let sweep = 0; sweep < 100; sweep++) {
    let off = 0;
    for (let p = 0; p < n; p++) for (let q = p + 1; q < n; q++) off += a[p * n + q] * a[p * n + q];
    if (off <= 1e-30 * scale || off === 0) break;
    for (let p = 0; p < n - 1; p++) {
      for (let q = p + 1; q < n; q++) {
        const apq = a[p * n + q];
        if (apq === 0) continue;
        const app = a[p * n + p];
        const aqq = a[q * n + q];
        const theta = (aqq - app) / (2 * apq);
        const t = Math.sign(theta || 1) / (Math.abs(theta) + Math.sqrt(theta * theta + 1));
        const c = 1 / Math.sqrt(t * t + 1);
        const s = t * c;
        for (let k = 0; k < n; k++) {
          const akp = a[k * n + p];
          const akq = a[k * n + q];
          a[k * n + p] = c * akp - s * akq;
          a[k * n + q] = s * akp + c * akq;
        }
        for (let k = 0; k < n; k++) {
          const apk = a[p * n + k];
          const aqk = a[q * n + k];
          a[p * n + k] = c * apk - s * aqk;
          a[q * n + k] = s * apk + c * aqk;
        }
        for (let k = 0; k < n; k++) {
          const vkp = v[k * n + p];
          const vkq = v[k * n + q];
          v[k * n + p] = c * vkp - s * vkq;
          v[k * n + q] = s * vkp + c * vkq;
        }
      }
    }
  }
  const order = Array.from({ length: n }, (_, i) => i).sort((x, y) => a[y * n + y] - a[x * n + x] || x - y);
  const values = new Float64Array(n);
  const vectors = new Float64Array(n * n);
  order.forEach((src, dst) => {
    values[dst] = a[src * n + src];
    for (let k = 0; k < n; k++) vectors[k * n + dst] = v[k * n + src];
  });
  return { values, vectors };
}

/**
 * A symmetric linear operator given by its action on a block: `apply(blockT, k)` receives k vectors as the
 * rows of a k × n matrix and returns the k × n matrix of their images (rows again), so kernels read rows.
 */
export interface SymmetricOperator {
  size: number;
  apply(blockT: Float64Array, k: number): Float64Array;
}

/** Operator for a dense symmetric n × n matrix. */
export function denseOperator(s: Float64Array, n: number): SymmetricOperator {
  return { size: n, apply: (blockT, k) => multiplyABt(blockT, k, n, s, n) };
}

export interface TopEigenOptions {
  /** Block size (default k + 4, at least 8). */
  blockSize?: number;
  /** Krylov blocks per restart (default chosen so the basis has about 6k–160 vectors). */
  blocks?: number;
  /** Relative residual tolerance ‖A u − θ u‖ ≤ tol · θ₁ (default 1e-10). */
  tolerance?: number;
  maxRestarts?: number;
  seed?: number;
  /** Warm start: n × m row-major columns (e.g. the previous fit's eigenvectors). */
  start?: Float64Array;
  startColumns?: number;
}

export interface TopEigenResult extends EigenResult {
  restarts: number;
  operatorApplications: number;
  maxResidual: number;
}

/** Orthonormalises the rows of Q (m × n) in place against the first `fixed` rows and each other (two passes of
 * modified Gram–Schmidt). Rows that vanish are replaced by seeded random rows. Returns the row count kept. */
function orthonormaliseRows(q: Float64Array, from: number, to: number, n: number, refill: () => number): void {
  for (let r = from; r < to; r++) {
    const base = r * n;
    for (let attempt = 0; attempt < 3; attempt++) {
      let before = 0;
      for (let i = 0; i < n; i++) before += q[base + i] * q[base + i];
      for (let pass = 0; pass < 2; pass++) {
        for (let s = 0; s < r; s++) {
          const sb = s * n;
          let d = 0;
          for (let i = 0; i < n; i++) d += q[sb + i] * q[base + i];
          if (d === 0) continue;
          for (let i = 0; i < n; i++) q[base + i] -= d * q[sb + i];
        }
      }
      let norm = 0;
      for (let i = 0; i < n; i++) norm += q[base + i] * q[base + i];
      if (norm > 1e-20 * before && norm > 0) {
        const inv = 1 / Math.sqrt(norm);
        for (let i = 0; i < n; i++) q[base + i] *= inv;
        break;
      }
      for (let i = 0; i < n; i++) q[base + i] = refill();
    }
  }
}

/** The k largest eigenpairs of a symmetric positive-semidefinite operator (restarted block Lanczos). */
export function topEigenpairs(op: SymmetricOperator, k: number, options: TopEigenOptions = {}): TopEigenResult {
  const n = op.size;
  if (k <= 0) return { values: new Float64Array(0), vectors: new Float64Array(0), restarts: 0, operatorApplications: 0, maxResidual: 0 };
  if (k > n) throw new Error(`cannot take ${k} eigenpairs of a ${n}-dimensional operator`);
  const b = Math.min(n, options.blockSize ?? Math.max(8, k + 4));
  const tol = options.tolerance ?? 1e-10;
  const maxBasis = Math.min(n, Math.max(6 * k, Math.min(160, 4 * b)));
  const blocks = Math.max(2, options.blocks ?? Math.floor(maxBasis / b));
  const maxRestarts = options.maxRestarts ?? 60;
  const rng = createRandom(options.seed ?? 20240611);
  const refill = () => rng.normal();

  // Small problems: dense projection is exact and cheap.
  if (n <= Math.max(b * blocks, 64)) {
    const eye = new Float64Array(n * n);
    for (let i = 0; i < n; i++) eye[i * n + i] = 1;
    const a = op.apply(eye, n); // rows = images of unit vectors = A (symmetric)
    const sym = new Float64Array(n * n);
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) sym[i * n + j] = 0.5 * (a[i * n + j] + a[j * n + i]);
    const full = symmetricEigen(sym, n);
    const vectors = new Float64Array(n * k);
    for (let i = 0; i < n; i++) for (let j = 0; j < k; j++) vectors[i * k + j] = full.vectors[i * n + j];
    return { values: full.values.slice(0, k), vectors, restarts: 0, operatorApplications: n, maxResidual: 0 };
  }

  const m = b * blocks; // basis size
  const q = new Float64Array(m * n); // basis rows
  const aq = new Float64Array(m * n); // images of basis rows
  // start block
  for (let r = 0; r < b; r++) {
    for (let i = 0; i < n; i++) {
      const fromStart = options.start && r < (options.startColumns ?? 0) ? options.start[i * options.startColumns! + r] : NaN;
      q[r * n + i] = Number.isNaN(fromStart) ? rng.normal() : fromStart;
    }
  }
  orthonormaliseRows(q, 0, b, n, refill);

  let applications = 0;
  let restarts = 0;
  let values = new Float64Array(k);
  let vectorsT = new Float64Array(k * n);
  let maxResidual = Infinity;
  let kept = 0; // rows of q carried over from the last restart (Ritz vectors), with images in aq
  for (;;) {
    // Build the Krylov basis block by block.
    let filled = Math.max(kept, b);
    if (kept === 0) {
      const img = op.apply(q.subarray(0, b * n), b);
      applications += b;
      aq.set(img, 0);
    }
    let sourceRow = kept > 0 ? 0 : filled - b; // after a restart, expand along the images of the leading Ritz vectors
    while (filled < m) {
      const add = Math.min(b, m - filled);
      // next block: images of the most recent block (Krylov sequence), orthogonalised against the basis
      q.set(aq.subarray(sourceRow * n, (sourceRow + add) * n), filled * n);
      sourceRow = filled;
      orthonormaliseRows(q, filled, filled + add, n, refill);
      const img = op.apply(q.subarray(filled * n, (filled + add) * n), add);
      applications += add;
      aq.set(img, filled * n);
      filled += add;
    }
    // Rayleigh–Ritz: H = Q A Qᵀ (m × m)
    const h = multiplyABt(q, m, n, aq, m);
    for (let i = 0; i < m; i++) {
      for (let j = 0; j < i; j++) {
        const s = 0.5 * (h[i * m + j] + h[j * m + i]);
        h[i * m + j] = s;
        h[j * m + i] = s;
      }
    }
    const small = symmetricEigen(h, m);
    // Ritz vectors (rows) for the top `keep` pairs: Yᵀ Q, Yᵀ AQ
    const keep = Math.min(m - b, Math.max(k, Math.min(m - b, k + b)));
    const yT = transpose(small.vectors, m, m).subarray(0, keep * m); // keep × m
    const ritz = new Float64Array(keep * n);
    const ritzImg = new Float64Array(keep * n);
    multiplyRowsInto(yT, keep, m, q, n, ritz);
    multiplyRowsInto(yT, keep, m, aq, n, ritzImg);
    // residuals of the wanted pairs
    maxResidual = 0;
    const scale = Math.max(Math.abs(small.values[0]), 1e-300);
    for (let j = 0; j < k; j++) {
      let r = 0;
      const theta = small.values[j];
      for (let i = 0; i < n; i++) {
        const d = ritzImg[j * n + i] - theta * ritz[j * n + i];
        r += d * d;
      }
      maxResidual = Math.max(maxResidual, Math.sqrt(r) / scale);
    }
    values = small.values.slice(0, k);
    vectorsT = ritz.slice(0, k * n);
    if (maxResidual <= tol || restarts >= maxRestarts) break;
    restarts++;
    // Thick restart: keep the Ritz vectors, continue the Krylov sequence from their residual directions.
    q.set(ritz, 0);
    aq.set(ritzImg, 0);
    kept = keep;
    if (kept >= m) break;
  }
  return { values, vectors: transpose(vectorsT, k, n), restarts, operatorApplications: applications, maxResidual };
}

/** out (r × n) = Y (r × m) · Rows (m × n). */
function multiplyRowsInto(y: Float64Array, r: number, m: number, rows: Float64Array, n: number, out: Float64Array): void {
  out.fill(0);
  for (let i = 0; i < r; i++) {
    const oi = i * n;
    for (let p = 0; p < m; p++) {
      const c = y[i * m + p];
      if (c === 0) continue;
      const rp = p * n;
      for (let j = 0; j < n; j++) out[oi + j] += c * rows[rp + j];
    }
  }
}
