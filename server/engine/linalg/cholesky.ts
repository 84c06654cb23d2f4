/**
 * Cholesky factorisation and solves for small symmetric positive-definite matrices (L × L, T × T),
 * row-major. Used for the L × L systems of factor models and for dense log-likelihoods.
 */

/** Lower-triangular L with A = L Lᵀ; throws if A is not positive definite. */
export function cholesky(a: Float64Array, n: number): Float64Array {
  const l = new Float64Array(n * n);
  for (let j = 0; j < n; j++) {
    let d = a[j * n + j];
    for (let k = 0; k < j; k++) d -= l[j * n + k] * l[j * n + k];
    if (!(d > 0)) throw new Error(`matrix is not positive definite (pivot ${j} = ${d})`);
    const ljj = Math.sqrt(d);
    l[j * n + j] = ljj;
    for (let i = j + 1; i < n; i++) {
      let s = a[i * n + j];
      for (let k = 0; k < j; k++) s -= l[i * n + k] * l[j * n + k];
      l[i * n + j] = s / ljj;
    }
  }
  return l;
}

/** Cholesky factor, or null when A is not numerically positive definite. */
export function tryCholesky(a: Float64Array, n: number): Float64Array | null {
  try {
    return cholesky(a, n);
  } catch {
    return null;
  }
}

/** log det A from its Cholesky factor. */
export function choleskyLogDet(l: Float64Array, n: number): number {
  let s = 0;
  for (let i = 0; i < n; i++) s += Math.log(l[i * n + i]);
  return 2 * s;
}

/** Solves A X = B in place for B (n × m, row-major), given A = L Lᵀ. */
export function choleskySolve(l: Float64Array, n: number, b: Float64Array, m: number): Float64Array {
  // forward: L Y = B
  for (let i = 0; i < n; i++) {
    for (let k = 0; k < i; k++) {
      const lik = l[i * n + k];
      if (lik === 0) continue;
      for (let c = 0; c < m; c++) b[i * m + c] -= lik * b[k * m + c];
    }
    const d = l[i * n + i];
    for (let c = 0; c < m; c++) b[i * m + c] /= d;
  }
  // backward: Lᵀ X = Y
  for (let i = n - 1; i >= 0; i--) {
    for (let k = i + 1; k < n; k++) {
      const lki = l[k * n + i];
      if (lki === 0) continue;
      for (let c = 0; c < m; c++) b[i * m + c] -= lki * b[k * m + c];
    }
    const d = l[i * n + i];
    for (let c = 0; c < m; c++) b[i * m + c] /= d;
  }
  return b;
}

/** Inverse of a symmetric positive-definite matrix. */
export function spdInverse(a: Float64Array, n: number): Float64Array {
  const l = cholesky(a, n);
  const inv = new Float64Array(n * n);
  for (let i = 0; i < n; i++) inv[i * n + i] = 1;
  choleskySolve(l, n, inv, n);
  // symmetrise against rounding
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < i; j++) {
      const v = 0.5 * (inv[i * n + j] + inv[j * n + i]);
      inv[i * n + j] = v;
      inv[j * n + i] = v;
    }
  }
  return inv;
}
