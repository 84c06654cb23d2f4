/**
 * Orthonormal bases (Gram–Schmidt) and a one-sided Jacobi SVD for tall, thin matrices (N × L with L small), used by
 * principal angles between loading subspaces. Row-major Float64Arrays throughout. Pure, no I/O.
 */
import { transpose } from './linalg/dense';

/** Copies the columns of a row-major rows × cols matrix into separate arrays. */
function toColumns(a: Float64Array, rows: number, cols: number): Float64Array[] {
  const out: Float64Array[] = [];
  for (let j = 0; j < cols; j++) {
    const c = new Float64Array(rows);
    for (let i = 0; i < rows; i++) c[i] = a[i * cols + j];
    out.push(c);
  }
  return out;
}

function fromColumns(columns: Float64Array[], rows: number): Float64Array {
  const cols = columns.length;
  const out = new Float64Array(rows * cols);
  for (let j = 0; j < cols; j++) {
    const c = columns[j];
    for (let i = 0; i < rows; i++) out[i * cols + j] = c[i];
  }
  return out;
}

function dot(x: Float64Array, y: Float64Array): number {
  let s = 0;
  for (let i = 0; i < x.length; i++) s += x[i] * y[i];
  return s;
}

/**
 * Orthonormal basis of the column space of a rows × cols matrix by modified Gram–Schmidt with one full
 * re-orthogonalisation pass ("twice is enough", Giraud, Langou & Rozložník 2005). Columns whose remaining
 * norm falls below `relativeTolerance` × their original norm are dropped as linearly dependent.
 * Returns the basis (rows × rank, row-major) and the rank.
 */
export function orthonormalBasis(
  a: Float64Array,
  rows: number,
  cols: number,
  relativeTolerance = 1e-12,
): { basis: Float64Array; rank: number } {
  const input = toColumns(a, rows, cols);
  const kept: Float64Array[] = [];
  for (const column of input) {
    const original = Math.sqrt(dot(column, column));
    if (!(original > 0)) continue;
    const v = column.slice();
    for (let pass = 0; pass < 2; pass++) {
      for (const q of kept) {
        const r = dot(q, v);
        for (let i = 0; i < rows; i++) v[i] -= r * q[i];
      }
    }
    const norm = Math.sqrt(dot(v, v));
    if (norm <= relativeTolerance * original) continue;
    for (let i = 0; i < rows; i++) v[i] /= norm;
    kept.push(v);
  }
  return { basis: fromColumns(kept, rows), rank: kept.length };
}

export interface ThinSvd {
  /** Singular values, descending. */
  singularValues: Float64Array;
  /** Left singular vectors, rows × cols row-major (columns ordered as singularValues; zero columns for σ = 0). */
  u: Float64Array;
  /** Right singular vectors, cols × cols row-major. */
  v: Float64Array;
}

/**
 * Thin SVD of a rows × cols matrix with rows ≥ cols by one-sided Jacobi rotations (Hestenes 1958;
 * Demmel & Veselić 1992, who show it computes small singular values to high relative accuracy).
 * Cost O(rows · cols² · sweeps): meant for cols up to a few dozen.
 */
export function thinSvd(a: Float64Array, rows: number, cols: number): ThinSvd {
  if (rows < cols) throw new Error(`thinSvd needs rows ≥ cols, got ${rows} × ${cols}`);
  const columns = toColumns(a, rows, cols);
  const vColumns: Float64Array[] = [];
  for (let j = 0; j < cols; j++) {
    const e = new Float64Array(cols);
    e[j] = 1;
    vColumns.push(e);
  }
  const eps = 2.220446049250313e-16;
  for (let sweep = 0; sweep < 80; sweep++) {
    let rotated = false;
    for (let p = 0; p < cols - 1; p++) {
      for (let q = p + 1; q < cols; q++) {
        const ap = columns[p];
        const aq = columns[q];
        const alpha = dot(ap, ap);
        const beta = dot(aq, aq);
        const gamma = dot(ap, aq);
        if (gamma === 0 || Math.abs(gamma) <= eps * Math.sqrt(alpha * beta)) continue;
        rotated = true;
        // Rotation that zeroes the (p, q) entry of AᵀA (Golub & Van Loan 2013, Algorithm 8.5.1 for the 2 × 2 problem).
        const zeta = (beta - alpha) / (2 * gamma);
        const t = (zeta >= 0 ? 1 : -1) / (Math.abs(zeta) + Math.sqrt(1 + zeta * zeta));
        const c = 1 / Math.sqrt(1 + t * t);
        const s = c * t;
        for (let i = 0; i < rows; i++) {
          const x = ap[i];
          const y = aq[i];
          ap[i] = c * x - s * y;
          aq[i] = s * x + c * y;
        }
        const vp = vColumns[p];
        const vq = vColumns[q];
        for (let i = 0; i < cols; i++) {
          const x = vp[i];
          const y = vq[i];
          vp[i] = c * x - s * y;
          vq[i] = s * x + c * y;
        }
      }
    }
    if (!rotated) break;
  }
  const norms = columns.map((c) => Math.sqrt(dot(c, c)));
  const order = norms.map((_, j) => j).sort((x, y) => norms[y] - norms[x] || x - y);
  const singularValues = new Float64Array(cols);
  const uColumns: Float64Array[] = [];
  const vSorted: Float64Array[] = [];
  order.forEach((j, k) => {
    singularValues[k] = norms[j];
    const u = new Float64Array(rows);
    if (norms[j] > 0) for (let i = 0; i < rows; i++) u[i] = columns[j][i] / norms[j];
    uColumns.push(u);
    vSorted.push(vColumns[j]);
  });
  return { singularValues, u: fromColumns(uColumns, rows), v: fromColumns(vSorted, cols) };
}

/** Singular values (descending) of any rows × cols matrix. */
export function singularValues(a: Float64Array, rows: number, cols: number): Float64Array {
  if (rows >= cols) return thinSvd(a, rows, cols).singularValues;
  return thinSvd(transpose(a, rows, cols), cols, rows).singularValues;
}
