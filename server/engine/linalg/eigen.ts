/**
 * Symmetric eigenproblems.
 *
 * - `symmetricEigen`: all eigenpairs of a small symmetric matrix (tridiagonal QL), used for L × L, T × T when
 *   small, and Krylov projections (at most a few hundred rows).
 * - `topEigenpairs`: the k largest eigenpairs of a large symmetric positive-semidefinite operator by a restarted
 *   block Krylov method (block Lanczos with full reorthogonalisation and Rayleigh–Ritz extraction; Golub &
 *   Underwood 1977, Saad 2011 "Numerical methods for large eigenvalue problems" §6). Never forms a full N × N
 *   decomposition. Deterministic: the start block comes from a seeded generator.
 */
import { createRandom } from '../random';
import { multiplyABt, multiplyABtInto, transpose } from './dense';
import { nativeMultiplyAB, nativeSymmetricEigen } from './native';
import { parallelMultiplyABt } from './parallel';

export interface EigenResult {
  /** Eigenvalues in decreasing order. */
  values: Float64Array;
  /** Eigenvectors as columns of an n × k row-major matrix, in the same order. */
  vectors: Float64Array;
}

/**
 * All eigenpairs of a symmetric n × n matrix, sorted by decreasing eigenvalue: Householder tridiagonalisation then
 * the implicit QL method (EISPACK tred2/tql2, Bowdler, Martin, Reinsch & Wilkinson 1968; as in the public-domain
 * JAMA library), written over Float64Array.
 */
export function symmetricEigen(input: Float64Array, n: number): EigenResult {
  const viaLapack = nativeSymmetricEigen(input, n); // LAPACK dsyevd when the native BLAS is built (native.ts)
  if (viaLapack) return viaLapack;
  const v = Float64Array.from(input.subarray(0, n * n));
  const d = new Float64Array(n);
  const e = new Float64Array(n);
  if (n === 0) return { values: d, vectors: v };
  tred2(n, v, d, e);
  tql2(n, v, d, e);
  const order = Array.from({ length: n }, (_, i) => i).sort((x, y) => d[y] - d[x] || x - y);
  const values = new Float64Array(n);
  const vectors = new Float64Array(n * n);
  order.forEach((src, dst) => {
    values[dst] = d[src];
    for (let k = 0; k < n; k++) vectors[k * n + dst] = v[k * n + src];
  });
  return { values, vectors };
}

function tred2(n: number, V: Float64Array, d: Float64Array, e: Float64Array): void {
  for (let j = 0; j < n; j++) d[j] = V[(n - 1) * n + j];
  for (let i = n - 1; i > 0; i--) {
    let scale = 0;
    let h = 0;
    for (let k = 0; k < i; k++) scale += Math.abs(d[k]);
    if (scale === 0) {
      e[i] = d[i - 1];
      for (let j = 0; j < i; j++) {
        d[j] = V[(i - 1) * n + j];
        V[i * n + j] = 0;
        V[j * n + i] = 0;
      }
    } else {
      for (let k = 0; k < i; k++) {
        d[k] /= scale;
        h += d[k] * d[k];
      }
      let f = d[i - 1];
      let g = Math.sqrt(h);
      if (f > 0) g = -g;
      e[i] = scale * g;
      h -= f * g;
      d[i - 1] = f - g;
      for (let j = 0; j < i; j++) e[j] = 0;
      for (let j = 0; j < i; j++) {
        f = d[j];
        V[j * n + i] = f;
        g = e[j] + V[j * n + j] * f;
        for (let k = j + 1; k <= i - 1; k++) {
          g += V[k * n + j] * d[k];
          e[k] += V[k * n + j] * f;
        }
        e[j] = g;
      }
      f = 0;
      for (let j = 0; j < i; j++) {
        e[j] /= h;
        f += e[j] * d[j];
      }
      const hh = f / (h + h);
      for (let j = 0; j < i; j++) e[j] -= hh * d[j];
      for (let j = 0; j < i; j++) {
        f = d[j];
        g = e[j];
        for (let k = j; k <= i - 1; k++) V[k * n + j] -= f * e[k] + g * d[k];
        d[j] = V[(i - 1) * n + j];
        V[i * n + j] = 0;
      }
    }
    d[i] = h;
  }
  for (let i = 0; i < n - 1; i++) {
    V[(n - 1) * n + i] = V[i * n + i];
    V[i * n + i] = 1;
    const h = d[i + 1];
    if (h !== 0) {
      for (let k = 0; k <= i; k++) d[k] = V[k * n + i + 1] / h;
      for (let j = 0; j <= i; j++) {
        let g = 0;
        for (let k = 0; k <= i; k++) g += V[k * n + i + 1] * V[k * n + j];
        for (let k = 0; k <= i; k++) V[k * n + j] -= g * d[k];
      }
    }
    for (let k = 0; k <= i; k++) V[k * n + i + 1] = 0;
  }
  for (let j = 0; j < n; j++) {
    d[j] = V[(n - 1) * n + j];
    V[(n - 1) * n + j] = 0;
  }
  V[(n - 1) * n + (n - 1)] = 1;
  e[0] = 0;
}

function tql2(n: number, V: Float64Array, d: Float64Array, e: Float64Array): void {
  for (let i = 1; i < n; i++) e[i - 1] = e[i];
  e[n - 1] = 0;
  let f = 0;
  let tst1 = 0;
  const eps = 2 ** -52;
  for (let l = 0; l < n; l++) {
    tst1 = Math.max(tst1, Math.abs(d[l]) + Math.abs(e[l]));
    let m = l;
    while (m < n) {
      if (Math.abs(e[m]) <= eps * tst1) break;
      m++;
    }
    if (m === n) m = n - 1;
    if (m > l) {
      let iter = 0;
      do {
        if (++iter > 300) throw new Error('symmetric eigenproblem did not converge');
        let g = d[l];
        let p = (d[l + 1] - g) / (2 * e[l]);
        let r = Math.sqrt(p * p + 1);
        if (p < 0) r = -r;
        d[l] = e[l] / (p + r);
        d[l + 1] = e[l] * (p + r);
        const dl1 = d[l + 1];
        let h = g - d[l];
        for (let i = l + 2; i < n; i++) d[i] -= h;
        f += h;
        p = d[m];
        let c = 1;
        let c2 = c;
        let c3 = c;
        const el1 = e[l + 1];
        let s = 0;
        let s2 = 0;
        for (let i = m - 1; i >= l; i--) {
          c3 = c2;
          c2 = c;
          s2 = s;
          g = c * e[i];
          h = c * p;
          r = Math.sqrt(p * p + e[i] * e[i]);
          e[i + 1] = s * r;
          s = e[i] / r;
          c = p / r;
          p = c * d[i] - s * g;
          d[i + 1] = h + s * (c * g + s * d[i]);
          for (let k = 0; k < n; k++) {
            const row = k * n;
            h = V[row + i + 1];
            V[row + i + 1] = s * V[row + i] + c * h;
            V[row + i] = c * V[row + i] - s * h;
          }
        }
        p = (-s * s2 * c3 * el1 * e[l]) / dl1;
        e[l] = s * p;
        d[l] = c * p;
      } while (Math.abs(e[l]) > eps * tst1);
    }
    d[l] += f;
    e[l] = 0;
  }
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
  return { size: n, apply: (blockT, k) => parallelMultiplyABt(blockT, k, n, s, n) };
}

export interface TopEigenOptions {
  /** Block size (default k + 4, at least 8). */
  blockSize?: number;
  /** Krylov basis size before a restart (default max(6k, 150)). */
  basisSize?: number;
  /** Krylov blocks per restart (default basisSize / blockSize). */
  blocks?: number;
  /** Relative residual tolerance ‖A u − θ u‖ ≤ tol · θ₁ (default 1e-10). */
  tolerance?: number;
  maxRestarts?: number;
  seed?: number;
  /** Only the leading pairs up to this count must meet the tolerance (default k); the rest ride along as a guard
   * band that speeds convergence of the wanted ones when the spectrum is clustered. */
  convergeCount?: number;
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
function orthonormaliseRows(q: Float64Array, from: number, to: number, n: number, refill: () => number, lowest = 0): void {
  for (let r = from; r < to; r++) {
    const base = r * n;
    for (let attempt = 0, low = lowest; attempt < 3; attempt++, low = 0) {
      let before = 0;
      for (let i = 0; i < n; i++) before += q[base + i] * q[base + i];
      for (let pass = 0; pass < 2; pass++) {
        for (let s = low; s < r; s++) {
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
  const maxBasis = Math.min(n, options.basisSize !== undefined ? Math.max(2 * b, options.basisSize) : Math.max(6 * k, 150));
  const blocks = Math.max(2, options.blocks ?? Math.floor(maxBasis / b));
  const maxRestarts = options.maxRestarts ?? 60;
  const rng = createRandom(options.seed ?? 20240611);
  const refill = () => rng.normal();

  // Small problems: a dense tridiagonal eigensolve is exact and cheaper than a Krylov basis nearly as large.
  if (n <= Math.max(b * blocks, 200)) {
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
  const earlyChecks = options.start !== undefined && (options.startColumns ?? 0) >= k;
  /** Rayleigh–Ritz on the first `fill` basis rows: the wanted pairs and their largest relative residual. */
  const ritzCheck = (fill: number) => {
    const qf = q.subarray(0, fill * n);
    const h = multiplyABt(qf, fill, n, aq.subarray(0, fill * n), fill);
    for (let i = 0; i < fill; i++) for (let j = 0; j < i; j++) {
      const v = 0.5 * (h[i * fill + j] + h[j * fill + i]);
      h[i * fill + j] = v;
      h[j * fill + i] = v;
    }
    const small = symmetricEigen(h, fill);
    const yT = transpose(small.vectors, fill, fill).subarray(0, k * fill);
    const ritz = new Float64Array(k * n);
    const img = new Float64Array(k * n);
    multiplyRowsInto(yT, k, fill, q, n, ritz);
    multiplyRowsInto(yT, k, fill, aq, n, img);
    const scale = Math.max(Math.abs(small.values[0]), 1e-300);
    let worst = 0;
    for (let j = 0; j < Math.min(k, options.convergeCount ?? k); j++) {
      let r = 0;
      for (let i = 0; i < n; i++) r += (img[j * n + i] - small.values[j] * ritz[j * n + i]) ** 2;
      worst = Math.max(worst, Math.sqrt(r) / scale);
    }
    return { values: small.values.slice(0, k), vectorsT: ritz, maxResidual: worst };
  };
  // Warm start: one application and a Rayleigh–Ritz on the start block may already be enough.
  if (options.start && (options.startColumns ?? 0) >= k) {
    const img = op.apply(q.subarray(0, b * n), b);
    applications += b;
    aq.set(img, 0);
    const first = ritzCheck(b);
    if (first.maxResidual <= tol) {
      return { values: first.values, vectors: transpose(first.vectorsT, k, n), restarts: 0, operatorApplications: applications, maxResidual: first.maxResidual };
    }
  }
  let values = new Float64Array(k);
  let vectorsT = new Float64Array(k * n);
  let maxResidual = Infinity;
  let bestResidual = Infinity;
  let stalled = 0;
  let kept = 0; // rows of q carried over from the last restart (Ritz vectors), with images in aq
  for (;;) {
    // Build the Krylov basis block by block.
    let filled = Math.max(kept, b);
    if (kept === 0 && applications === 0) {
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
      // block classical Gram–Schmidt against the basis, twice (CGS2), with tiled products; then within the block
      const fresh = q.subarray(filled * n, (filled + add) * n);
      const basis = q.subarray(0, filled * n);
      for (let pass = 0; pass < 2; pass++) {
        const coef = multiplyABt(fresh, add, n, basis, filled); // add × filled
        const proj = multiplyAtBRows(coef, add, filled, basis, n);
        for (let j = 0; j < add * n; j++) fresh[j] -= proj[j];
      }
      orthonormaliseRows(q, filled, filled + add, n, refill, filled);
      const img = op.apply(q.subarray(filled * n, (filled + add) * n), add);
      applications += add;
      aq.set(img, filled * n);
      filled += add;
      if (earlyChecks && filled < m) {
        // Warm-started solves usually converge long before the basis is full: check after each block.
        const early = ritzCheck(filled);
        if (early.maxResidual <= tol) {
          return { values: early.values, vectors: transpose(early.vectorsT, k, n), restarts, operatorApplications: applications, maxResidual: early.maxResidual };
        }
      }
    }
    // Rayleigh–Ritz: H = Q A Qᵀ (m × m)
    const h = parallelMultiplyABt(q, m, n, aq, m);
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
    for (let j = 0; j < Math.min(k, options.convergeCount ?? k); j++) {
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
    // Rounding sets a floor on the attainable residual: stop when three restarts have not halved it.
    if (maxResidual < 0.5 * bestResidual) {
      bestResidual = maxResidual;
      stalled = 0;
    } else if (++stalled >= 3) break;
    restarts++;
    // Thick restart: keep the Ritz vectors (images recomputed after a stall, so rounding does not accumulate),
    // continue the Krylov sequence from their residual directions.
    q.set(ritz, 0);
    if (stalled > 0) {
      aq.set(op.apply(ritz, keep), 0);
      applications += keep;
    } else aq.set(ritzImg, 0);
    kept = keep;
    if (kept >= m) break;
  }
  return { values, vectors: transpose(vectorsT, k, n), restarts, operatorApplications: applications, maxResidual };
}

/** out (r × n) = Y (r × m) · Rows (m × n), through the tiled kernel on Rowsᵀ. */
function multiplyRowsInto(y: Float64Array, r: number, m: number, rows: Float64Array, n: number, out: Float64Array): void {
  if (nativeMultiplyAB(y.subarray(0, r * m), r, m, rows.subarray(0, m * n), n, out)) return;
  const rowsT = transpose(rows.subarray(0, m * n), m, n);
  multiplyABtInto(y, m, rowsT, n, out, n, 0, false, 0, r);
}

/** (r × n) = Coef (r × m) · Rows (m × n), accumulating row by row. */
function multiplyAtBRows(coef: Float64Array, r: number, m: number, rows: Float64Array, n: number): Float64Array {
  const out = new Float64Array(r * n);
  multiplyRowsInto(coef, r, m, rows, n, out);
  return out;
}
