/**
 * Optional native BLAS path: the addon in native/blas (a Node-API binding to Debian's OpenBLAS, built by the
 * project's bootstrap with node-gyp) takes the large products when it is present; otherwise, or with
 * LOADLINE_NATIVE_BLAS=0, the pure-JS kernels in dense.ts and parallel.ts do. The choice depends only on the
 * operand sizes, so the same input follows the same path and gives the same bits on every rerun; OpenBLAS's thread
 * count is fixed once at load (LOADLINE_ENGINE_THREADS, else 2) for the same reason. Results differ from the JS
 * kernels' in the last bits (another summation order), within every tolerance the engine's checks use.
 */
import { existsSync } from 'node:fs';
import { createRequire } from 'node:module';
import { fileURLToPath } from 'node:url';

interface BlasAddon {
  gemm(
    transA: boolean,
    transB: boolean,
    m: number,
    n: number,
    k: number,
    alpha: number,
    a: Float64Array,
    lda: number,
    b: Float64Array,
    ldb: number,
    beta: number,
    c: Float64Array,
    ldc: number,
  ): void;
  syrk(trans: boolean, n: number, k: number, alpha: number, a: Float64Array, lda: number, beta: number, c: Float64Array, ldc: number): void;
  /** All eigenpairs of a symmetric matrix (LAPACK dsyevd): ascending values in w, eigenvector i in row i of a. */
  syev?(n: number, a: Float64Array, w: Float64Array): number;
  setThreads(count: number): void;
  threads(): number;
  config(): string;
}

/** Dense symmetric eigenproblems from this order up go to LAPACK (dsyevd is about 4× the JS tred2/tql2 at n = 80–140). */
export const NATIVE_MIN_EIGEN_ORDER = 24;

/** Products below this many flops stay in JS (a native call and OpenBLAS's setup cost a few microseconds). */
export const NATIVE_MIN_FLOPS = 1 << 17;

const ADDON_PATH = fileURLToPath(new URL('../../../native/blas/build/Release/loadline_blas.node', import.meta.url));

let addon: BlasAddon | null | undefined;
let unavailableReason = '';

function fixedThreadCount(): number {
  const env = process.env.LOADLINE_ENGINE_THREADS;
  if (env !== undefined && env !== '') {
    const v = Number(env);
    if (Number.isInteger(v) && v >= 1) return Math.min(v, 16);
  }
  return 2;
}

function load(): BlasAddon | null {
  if (addon !== undefined) return addon;
  addon = null;
  if (process.env.LOADLINE_NATIVE_BLAS === '0') {
    unavailableReason = 'disabled by LOADLINE_NATIVE_BLAS=0';
    return addon;
  }
  if (!existsSync(ADDON_PATH)) {
    unavailableReason = 'addon not built (native/blas)';
    return addon;
  }
  // OpenBLAS's idle threads spin for 2^28 cycles after each call by default; 2^10 gives the shared cores back
  // without costing wall time (measured: FA 2000 × 1000 cpu 2.1 → 1.6 s). Read once when the library loads,
  // so it is set only around the load and a caller's own setting wins.
  const spinWasSet = process.env.OPENBLAS_THREAD_TIMEOUT !== undefined;
  if (!spinWasSet) process.env.OPENBLAS_THREAD_TIMEOUT = '10';
  try {
    const loaded = createRequire(import.meta.url)(ADDON_PATH) as BlasAddon;
    loaded.setThreads(fixedThreadCount());
    addon = loaded;
  } catch (error) {
    unavailableReason = `addon failed to load: ${(error as Error).message.split('\n')[0]}`;
    // the one log line: a built addon that does not load is worth knowing about
    process.stderr.write(`[loadline engine] native BLAS unavailable (${unavailableReason}); using the JS kernels\n`);
  } finally {
    if (!spinWasSet) delete process.env.OPENBLAS_THREAD_TIMEOUT;
  }
  return addon;
}

/** Which path the big products take, for benchmarks and diagnostics. */
export function nativeBlasInfo(): { active: boolean; detail: string } {
  const blas = load();
  return blas ? { active: true, detail: `${blas.config()}, ${blas.threads()} threads` } : { active: false, detail: unavailableReason };
}

/**
 * C (m × n) = A Bᵀ (A m × k, B n × k, row-major) natively when the addon is loaded and the product is large; returns
 * null to let the caller use the JS kernel. `symmetric` (B is A): A Aᵀ by dsyrk, lower triangle mirrored.
 */
export function nativeMultiplyABt(a: Float64Array, m: number, k: number, b: Float64Array, n: number, out?: Float64Array, symmetric = false): Float64Array | null {
  if (2 * m * n * k * (symmetric ? 0.5 : 1) < NATIVE_MIN_FLOPS) return null;
  const blas = load();
  if (!blas) return null;
  const c = out ?? new Float64Array(m * n);
  if (symmetric) {
    blas.syrk(false, m, k, 1, a, k, 0, c, m);
    for (let i = 0; i < m; i++) for (let j = 0; j < i; j++) c[j * m + i] = c[i * m + j];
  } else {
    blas.gemm(false, true, m, n, k, 1, a, k, b, k, 0, c, n);
  }
  return c;
}

/** C (m × n) = A B (A m × k, B k × n, row-major) natively when large; null otherwise. */
export function nativeMultiplyAB(a: Float64Array, m: number, k: number, b: Float64Array, n: number, out?: Float64Array): Float64Array | null {
  if (2 * m * n * k < NATIVE_MIN_FLOPS) return null;
  const blas = load();
  if (!blas) return null;
  const c = out ?? new Float64Array(m * n);
  blas.gemm(false, false, m, n, k, 1, a, k, b, n, 0, c, n);
  return c;
}

/**
 * All eigenpairs of a symmetric n × n matrix (row-major), values in decreasing order and eigenvectors as the columns
 * of an n × n row-major matrix (symmetricEigen's layout), by LAPACK's dsyevd; null when small, unavailable or failed.
 */
export function nativeSymmetricEigen(input: Float64Array, n: number): { values: Float64Array; vectors: Float64Array } | null {
  if (n < NATIVE_MIN_EIGEN_ORDER) return null;
  const blas = load();
  if (!blas || typeof blas.syev !== 'function') return null;
  const z = Float64Array.from(input.subarray(0, n * n));
  const w = new Float64Array(n);
  if (blas.syev(n, z, w) !== 0) return null;
  const values = new Float64Array(n);
  const vectors = new Float64Array(n * n);
  for (let dst = 0; dst < n; dst++) {
    const src = n - 1 - dst;
    values[dst] = w[src];
    for (let k = 0; k < n; k++) vectors[k * n + dst] = z[src * n + k];
  }
  return { values, vectors };
}
