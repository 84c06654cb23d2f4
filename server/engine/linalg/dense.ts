/**
 * Dense kernels over row-major Float64Arrays. Pure single-thread JavaScript; the order of every floating-point
 * operation is fixed, so results are bit-for-bit reproducible.
 *
 * The inner products run as register-tiled dot products of contiguous rows (4 rows of A against 2 rows of B at a time,
 * blocked over the shared dimension so the 6 active row segments stay in L1 cache). Hand-tiled loops of this
 * shape run at about 3–4 GFLOP/s per core on this machine, against about 1 GFLOP/s for a naive i-k-j loop.
 */

import { nativeMultiplyABt } from './native';

/**
 * C (m × n) = A (m × k) · Bᵀ where B is n × k; both operands row-major, so every inner product reads two
 * contiguous rows. When `symmetric` is set (A and B are the same matrix) only the lower triangle is computed and
 * then mirrored. Optional row range [rowStart, rowEnd) of C, for splitting work. Whole products above a size threshold
 * run in the native BLAS when it is available (native.ts), so the JS kernel's bit pattern holds only on the JS path.
 */
export function multiplyABt(
  a: Float64Array,
  m: number,
  k: number,
  b: Float64Array,
  n: number,
  out?: Float64Array,
  symmetric = false,
  rowStart = 0,
  rowEnd = m,
): Float64Array {
  if (rowStart === 0 && rowEnd === m) {
    // large whole products go to the native BLAS when it is built (see native.ts)
    const viaNative = nativeMultiplyABt(a, m, k, b, n, out, symmetric);
    if (viaNative) return viaNative;
  }
  const c = out ?? new Float64Array(m * n);
  multiplyABtInto(a, k, b, n, c, n, 0, symmetric, rowStart, rowEnd);
  if (symmetric) mirrorLower(c, n, rowStart, rowEnd);
  return c;
}

/**
 * The kernel: rows [rowStart, rowEnd) of A (· × k) times the n rows of B, into C[i·ldc + cOffset + j].
 * Every entry is accumulated in the same order (over p, in blocks of DEPTH_BLOCK) whatever the tiling or the split,
 * so results are bit-identical however the work is divided between threads. `symmetric`: lower triangle only
 * (j ≤ i + 3 within 4-row tiles; callers mirror). Self-contained (no outer references except DEPTH_BLOCK) so the
 * worker pool can run its source.
 */
export function multiplyABtInto(
  a: Float64Array,
  k: number,
  b: Float64Array,
  n: number,
  c: Float64Array,
  ldc: number,
  cOffset: number,
  symmetric: boolean,
  rowStart: number,
  rowEnd: number,
): void {
  const DEPTH = 512;
  for (let i = rowStart; i < rowEnd; i++) c.fill(0, i * ldc + cOffset, i * ldc + cOffset + n);
  for (let p0 = 0; p0 < k; p0 += DEPTH) {
    const p1 = Math.min(k, p0 + DEPTH);
    let i = rowStart;
    for (; i + 4 <= rowEnd; i += 4) {
      const a0 = i * k;
      const a1 = a0 + k;
      const a2 = a1 + k;
      const a3 = a2 + k;
      const jEnd = symmetric ? Math.min(n, i + 4) : n;
      let j = 0;
      for (; j + 2 <= jEnd; j += 2) {
        const b0 = j * k;
        const b1 = b0 + k;
        let c00 = 0, c01 = 0, c10 = 0, c11 = 0, c20 = 0, c21 = 0, c30 = 0, c31 = 0;
        for (let p = p0; p < p1; p++) {
          const x0 = b[b0 + p];
          const x1 = b[b1 + p];
          const y0 = a[a0 + p];
          const y1 = a[a1 + p];
          const y2 = a[a2 + p];
          const y3 = a[a3 + p];
          c00 += y0 * x0;
          c01 += y0 * x1;
          c10 += y1 * x0;
          c11 += y1 * x1;
          c20 += y2 * x0;
          c21 += y2 * x1;
          c30 += y3 * x0;
          c31 += y3 * x1;
        }
        const r = i * ldc + cOffset + j;
        c[r] += c00;
        c[r + 1] += c01;
        c[r + ldc] += c10;
        c[r + ldc + 1] += c11;
        c[r + 2 * ldc] += c20;
        c[r + 2 * ldc + 1] += c21;
        c[r + 3 * ldc] += c30;
        c[r + 3 * ldc + 1] += c31;
      }
      for (; j < jEnd; j++) {
        const b0 = j * k;
        let c0 = 0, c1 = 0, c2 = 0, c3 = 0;
        for (let p = p0; p < p1; p++) {
          const x = b[b0 + p];
          c0 += a[a0 + p] * x;
          c1 += a[a1 + p] * x;
          c2 += a[a2 + p] * x;
          c3 += a[a3 + p] * x;
        }
        const r = i * ldc + cOffset + j;
        c[r] += c0;
        c[r + ldc] += c1;
        c[r + 2 * ldc] += c2;
        c[r + 3 * ldc] += c3;
      }
    }
    for (; i < rowEnd; i++) {
      const a0 = i * k;
      const jEnd = symmetric ? Math.min(n, i + 1) : n;
      for (let j = 0; j < jEnd; j++) {
        const b0 = j * k;
        let s = 0;
        for (let p = p0; p < p1; p++) s += a[a0 + p] * b[b0 + p];
        c[i * ldc + cOffset + j] += s;
      }
    }
  }
}

/** Copies the lower triangle of rows [rowStart, rowEnd) into the upper triangle (square n × n). */
export function mirrorLower(c: Float64Array, n: number, rowStart = 0, rowEnd = n): void {
  for (let i = rowStart; i < rowEnd; i++) for (let j = 0; j < i; j++) c[j * n + i] = c[i * n + j];
}

/** G (m × m) = A Aᵀ for A m × k row-major (inner products of rows). */
export function rowGram(a: Float64Array, m: number, k: number, out?: Float64Array): Float64Array {
  // The 4-row tiles compute a few entries above the diagonal too; mirroring from the lower triangle fixes them.
  const c = multiplyABt(a, m, k, a, m, out, true);
  return c;
}

/** Transpose of an m × n row-major matrix (blocked for cache). */
export function transpose(a: Float64Array, m: number, n: number, out?: Float64Array): Float64Array {
  const t = out ?? new Float64Array(m * n);
  const block = 32;
  for (let i0 = 0; i0 < m; i0 += block) {
    const i1 = Math.min(m, i0 + block);
    for (let j0 = 0; j0 < n; j0 += block) {
      const j1 = Math.min(n, j0 + block);
      for (let i = i0; i < i1; i++) for (let j = j0; j < j1; j++) t[j * m + i] = a[i * n + j];
    }
  }
  return t;
}

/** C (m × n) = A (m × k) · B (k × n), both row-major (for small or skinny operands). */
export function multiply(a: Float64Array, m: number, k: number, b: Float64Array, n: number, out?: Float64Array): Float64Array {
  const c = out ?? new Float64Array(m * n);
  c.fill(0, 0, m * n);
  for (let i = 0; i < m; i++) {
    const ci = i * n;
    for (let p = 0; p < k; p++) {
      const x = a[i * k + p];
      if (x === 0) continue;
      const bp = p * n;
      for (let j = 0; j < n; j++) c[ci + j] += x * b[bp + j];
    }
  }
  return c;
}

/** C (m × n) = Aᵀ B where A is k × m and B is k × n, both row-major (for skinny operands). */
export function multiplyAtB(a: Float64Array, k: number, m: number, b: Float64Array, n: number, out?: Float64Array): Float64Array {
  const c = out ?? new Float64Array(m * n);
  c.fill(0, 0, m * n);
  for (let p = 0; p < k; p++) {
    const ap = p * m;
    const bp = p * n;
    for (let i = 0; i < m; i++) {
      const x = a[ap + i];
      if (x === 0) continue;
      const ci = i * n;
      for (let j = 0; j < n; j++) c[ci + j] += x * b[bp + j];
    }
  }
  return c;
}

/** Product of a symmetric n × n matrix S with a block V (n × k, row-major): returns n × k. */
export function symmetricTimesBlock(s: Float64Array, n: number, v: Float64Array, k: number): Float64Array {
  const vt = transpose(v, n, k);
  return multiplyABt(s, n, n, vt, k);
}

export function identity(n: number): Float64Array {
  const a = new Float64Array(n * n);
  for (let i = 0; i < n; i++) a[i * n + i] = 1;
  return a;
}

export function frobeniusNorm(a: Float64Array): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * a[i];
  return Math.sqrt(s);
}

/** ‖A − B‖_F / ‖B‖_F. */
export function relativeFrobenius(a: Float64Array, b: Float64Array): number {
  let d = 0;
  let r = 0;
  for (let i = 0; i < a.length; i++) {
    d += (a[i] - b[i]) ** 2;
    r += b[i] * b[i];
  }
  return Math.sqrt(d / r);
}

export function trace(a: Float64Array, n: number): number {
  let s = 0;
  for (let i = 0; i < n; i++) s += a[i * n + i];
  return s;
}

/** W Wᵀ + diag(ψ) as a dense N × N matrix (for small N: tests and dense exports). */
export function lowRankPlusDiagonal(w: Float64Array, n: number, l: number, psi: Float64Array): Float64Array {
  const s = l > 0 ? rowGram(w, n, l) : new Float64Array(n * n);
  for (let i = 0; i < n; i++) s[i * n + i] += psi[i];
  return s;
}
