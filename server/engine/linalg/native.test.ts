import { describe, expect, it } from 'vitest';
import { multiplyABt, multiplyABtInto, mirrorLower, relativeFrobenius } from './dense';
import { nativeBlasInfo, nativeMultiplyAB, NATIVE_MIN_FLOPS } from './native';
import { parallelMultiplyABt } from './parallel';
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
});
