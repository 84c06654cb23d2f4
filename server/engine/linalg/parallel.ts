/**
 * Optional worker-thread pool for the big products (S = ZᵀZ, Gram matrices, S·B with wide S), sharing matrices
 * through SharedArrayBuffer. The calling thread works too and then blocks on Atomics.wait until the helpers finish,
 * so the engine's API stays synchronous. Each output entry is computed by the same kernel in the same operation
 * order whatever the split (see multiplyABtInto), so results are bit-for-bit identical with or without the pool.
 *
 * Enabled by LOADLINE_ENGINE_THREADS (number of threads including the caller; default: available cores, at most 4;
 * 1 disables). Small products stay on the calling thread (starting a message round costs tens of microseconds,
 * starting a worker 30–80 ms, so the pool is created once and its workers are unref'd).
 */
import { availableParallelism } from 'node:os';
import { Worker } from 'node:worker_threads';
import { mirrorLower, multiplyABtInto } from './dense';
import { nativeMultiplyABt } from './native';

const MIN_FLOPS = 4e6; // below this a product is not worth splitting

let pool: { workers: Worker[]; control: Int32Array } | null | undefined;

function threadCount(): number {
  const env = process.env.LOADLINE_ENGINE_THREADS;
  if (env !== undefined && env !== '') {
    const v = Number(env);
    if (Number.isInteger(v) && v >= 1) return Math.min(v, 16);
  }
  return Math.max(1, Math.min(4, availableParallelism()));
}

const WORKER_SOURCE = `
const { parentPort, workerData } = require('node:worker_threads');
const multiplyABtInto = ${multiplyABtInto.toString()};
const control = new Int32Array(workerData.control);
parentPort.on('message', (job) => {
  multiplyABtInto(job.a, job.k, job.b, job.n, job.c, job.ldc, job.cOffset, job.symmetric, job.rowStart, job.rowEnd);
  Atomics.store(control, job.slot, 1);
  Atomics.notify(control, job.slot);
});
`;

function getPool(): { workers: Worker[]; control: Int32Array } | null {
  if (pool !== undefined) return pool;
  const threads = threadCount();
  if (threads <= 1) {
    pool = null;
    return pool;
  }
  try {
    const control = new Int32Array(new SharedArrayBuffer(4 * 64));
    const workers: Worker[] = [];
    for (let i = 0; i < threads - 1; i++) {
      const w = new Worker(WORKER_SOURCE, { eval: true, workerData: { control: control.buffer } });
      w.unref();
      workers.push(w);
    }
    pool = { workers, control };
  } catch {
    pool = null; // no worker support: single-thread path
  }
  return pool;
}

/** A Float64Array on shared memory when a pool is available (else an ordinary one). */
export function sharedFloat64(length: number): Float64Array {
  return threadCount() > 1 && typeof SharedArrayBuffer !== 'undefined' ? new Float64Array(new SharedArrayBuffer(8 * length)) : new Float64Array(length);
}

const isShared = (x: Float64Array) => typeof SharedArrayBuffer !== 'undefined' && x.buffer instanceof SharedArrayBuffer;

// Grow-only scratch areas on shared memory for copied inputs and small outputs, so repeated thin products
// (S·B inside iterative fits) do not churn SharedArrayBuffers, which the garbage collector frees lazily.
const scratch: { a: Float64Array | null; b: Float64Array | null; c: Float64Array | null } = { a: null, b: null, c: null };

function scratchArea(which: 'a' | 'b' | 'c', length: number): Float64Array {
  let area = scratch[which];
  if (!area || area.length < length) {
    area = new Float64Array(new SharedArrayBuffer(8 * Math.max(length, 1 << 16)));
    scratch[which] = area;
  }
  return area.subarray(0, length);
}

function toShared(x: Float64Array, which: 'a' | 'b'): Float64Array {
  if (isShared(x)) return x;
  const y = scratchArea(which, x.length);
  y.set(x);
  return y;
}

/** Outputs at least this large get their own shared buffer (they are usually kept, e.g. S or a Gram matrix). */
const OWN_OUTPUT = 1 << 20;

interface Part {
  rowStart: number;
  rowEnd: number;
  /** Column block [colStart, colEnd) of C = rows of B. */
  colStart: number;
  colEnd: number;
}

/**
 * C (m × n) = A Bᵀ as multiplyABt, split over threads when large. Large operands not already on shared memory are
 * copied there (so keep the big matrices shared: sharedFloat64). `symmetric`: A Aᵀ, lower triangle then mirrored.
 */
export function parallelMultiplyABt(a: Float64Array, m: number, k: number, b: Float64Array, n: number, symmetric = false): Float64Array {
  // the native BLAS (when built) takes large products with its own fixed thread count; the pool is the JS path
  const viaNative = nativeMultiplyABt(a, m, k, b, n, undefined, symmetric);
  if (viaNative) return viaNative;
  const flops = 2 * m * n * k * (symmetric ? 0.5 : 1);
  const p = flops >= MIN_FLOPS ? getPool() : null;
  if (!p) {
    const c = new Float64Array(m * n);
    multiplyABtInto(a, k, b, n, c, n, 0, symmetric, 0, m);
    if (symmetric) mirrorLower(c, n);
    return c;
  }
  const threads = p.workers.length + 1;
  const sa = toShared(a, 'a');
  const sb = symmetric ? sa : toShared(b, 'b');
  const own = m * n >= OWN_OUTPUT;
  const c = own ? new Float64Array(new SharedArrayBuffer(8 * m * n)) : scratchArea('c', m * n);
  const parts: Part[] = [];
  if (symmetric) {
    // balance the triangle: row i costs ~i, so cut at m·sqrt(t/threads)
    let prev = 0;
    for (let t = 1; t <= threads; t++) {
      let cut = Math.round(m * Math.sqrt(t / threads));
      cut = t === threads ? m : Math.min(m, Math.max(prev, cut - (cut % 4)));
      parts.push({ rowStart: prev, rowEnd: cut, colStart: 0, colEnd: n });
      prev = cut;
    }
  } else if (m >= n) {
    for (let t = 0; t < threads; t++) {
      const r0 = Math.floor((m * t) / threads);
      const r1 = Math.floor((m * (t + 1)) / threads);
      parts.push({ rowStart: r0, rowEnd: r1, colStart: 0, colEnd: n });
    }
  } else {
    for (let t = 0; t < threads; t++) {
      const j0 = Math.floor((n * t) / threads);
      const j1 = Math.floor((n * (t + 1)) / threads);
      parts.push({ rowStart: 0, rowEnd: m, colStart: j0, colEnd: j1 });
    }
  }
  const { control } = p;
  // the caller takes the first part, workers the rest
  for (let w = 1; w < parts.length; w++) {
    const part = parts[w];
    Atomics.store(control, w, 0);
    p.workers[w - 1].postMessage({
      a: sa,
      k,
      b: symmetric ? sb : sb.subarray(part.colStart * k, part.colEnd * k),
      n: part.colEnd - part.colStart,
      c,
      ldc: n,
      cOffset: part.colStart,
      symmetric,
      rowStart: part.rowStart,
      rowEnd: part.rowEnd,
      slot: w,
    });
  }
  const first = parts[0];
  multiplyABtInto(sa, k, symmetric ? sb : sb.subarray(first.colStart * k, first.colEnd * k), first.colEnd - first.colStart, c, n, first.colStart, symmetric, first.rowStart, first.rowEnd);
  for (let w = 1; w < parts.length; w++) {
    while (Atomics.load(control, w) === 0) Atomics.wait(control, w, 0, 1000);
  }
  if (symmetric) mirrorLower(c, n);
  return own ? c : c.slice();
}
