import { describe, expect, it } from 'vitest';
import { multiplyABt, multiplyABtInto, mirrorLower, relativeFrobenius } from './dense';
import { nativeBlasInfo, nativeMultiplyAB, NATIVE_MIN_FLOPS } from './native';
import { parallelMultiplyABt } from './parallel';
import { symmetricEigen } from './eigen';
import { createRandom } from '../random';

function randomMatrix(rows: number, cols: number, seed: number): Float64Array {
  const rng = createRandom(seed);
  const a = new Float64Array(rows * cols);
  for (let i = 0; i < a.length; i++) a[i] = rng.normal();
  return a;
}

/** The JS kernel itself, whatever path multiplyABt takes. */
function jsABt(a: Float64Array, m: number, k: number, b: Float64Array, n: number, symmetric = false): Float64Array {
  const c = new Float64Array(m * n);
  multiplyABtInto(a, k, b, n, c, n, 0, symmetric, 0, m);
  if (symmetric) mirrorLower(c, n);
  return c;
}

const info = nativeBlasInfo();

describe(`large products (${info.active ? 'native BLAS' : 'JS kernels'}: ${info.detail})`, () => {
  const m = 123;
  const k = 457;
  const n = 89;
  const a = randomMatrix(m, k, 11);
  const b = randomMatrix(n, k, 12);

  it('agree with the JS kernel to rounding, plain and symmetric', () => {
    expect(2 * m * n * k).toBeGreaterThan(NATIVE_MIN_FLOPS);
    expect(relativeFrobenius(multiplyABt(a, m, k, b, n), jsABt(a, m, k, b, n))).toBeLessThan(1e-14);
    expect(relativeFrobenius(parallelMultiplyABt(a, m, k, b, n), jsABt(a, m, k, b, n))).toBeLessThan(1e-14);
    const gram = multiplyABt(a, m, k, a, m, undefined, true);
    expect(relativeFrobenius(gram, jsABt(a, m, k, a, m, true))).toBeLessThan(1e-14);
    for (let i = 0; i < m; i++) for (let j = 0; j < i; j++) expect(gram[i * m + j]).toBe(gram[j * m + i]);
  });

  it('give the same bits on every rerun', () => {
    const first = multiplyABt(a, m, k, b, n);
    for (let r = 0; r < 3; r++) expect(Array.from(multiplyABt(a, m, k, b, n))).toEqual(Array.from(first));
    const gram = parallelMultiplyABt(a, m, k, a, m, true);
    expect(Array.from(parallelMultiplyABt(a, m, k, a, m, true))).toEqual(Array.from(gram));
  });

  it('write into a given output, leaving nothing of its old contents', () => {
    const out = new Float64Array(m * n).fill(Number.NaN);
    multiplyABt(a, m, k, b, n, out);
    expect(relativeFrobenius(out, jsABt(a, m, k, b, n))).toBeLessThan(1e-14);
  });

  it.skipIf(!info.active)('native A·B matches the transpose route, and a wrong size throws instead of overrunning', () => {
    const bt = new Float64Array(k * n); // B as k × n
    for (let i = 0; i < n; i++) for (let p = 0; p < k; p++) bt[p * n + i] = b[i * k + p];
    const ab = nativeMultiplyAB(a, m, k, bt, n)!;
    expect(relativeFrobenius(ab, jsABt(a, m, k, b, n))).toBeLessThan(1e-14);
    expect(() => nativeMultiplyAB(a, m, k + 1, bt, n)).toThrow(/does not fit/);
    expect(() => nativeMultiplyAB(a, m, k, bt, n, new Float64Array(m * n - 1))).toThrow(/does not fit/);
  });

  it('symmetric eigensolver (LAPACK dsyevd on the native path): A V = V Λ, VᵀV = I, values decreasing', () => {
    const n = 60;
    const x = randomMatrix(n, 80, 13);
    const s = jsABt(x, n, 80, x, n, true);
    const { values, vectors } = symmetricEigen(s, n);
    let scale = 0;
    for (let i = 0; i < n * n; i++) scale = Math.max(scale, Math.abs(s[i]));
    for (let j = 0; j < n; j++) {
      if (j > 0) expect(values[j]).toBeLessThanOrEqual(values[j - 1]);
      for (let i = 0; i < n; i++) {
        let av = 0;
        for (let p = 0; p < n; p++) av += s[i * n + p] * vectors[p * n + j];
        expect(Math.abs(av - values[j] * vectors[i * n + j])).toBeLessThan(1e-12 * scale);
      }
      for (let q = 0; q <= j; q++) {
        let d = 0;
        for (let p = 0; p < n; p++) d += vectors[p * n + j] * vectors[p * n + q];
        expect(Math.abs(d - (q === j ? 1 : 0))).toBeLessThan(1e-12);
      }
    }
  });
});
