import { describe, expect, it } from 'vitest';
import { Matrix, EigenvalueDecomposition } from 'ml-matrix';
import { createRandom } from '../random';
import { multiplyABt, rowGram, transpose, multiply, multiplyAtB } from './dense';
import { cholesky, choleskyLogDet, choleskySolve, spdInverse } from './cholesky';
import { denseOperator, symmetricEigen, topEigenpairs } from './eigen';

function randomMatrix(rows: number, cols: number, seed: number): Float64Array {
  return createRandom(seed).fillNormal(new Float64Array(rows * cols));
}

describe('dense kernels', () => {
  it('multiplyABt and rowGram agree with ml-matrix', () => {
    const a = randomMatrix(37, 601, 1);
    const b = randomMatrix(23, 601, 2);
    const c = multiplyABt(a, 37, 601, b, 23);
    const ref = new Matrix(Array.from({ length: 37 }, (_, i) => Array.from(a.subarray(i * 601, (i + 1) * 601)))).mmul(
      new Matrix(Array.from({ length: 23 }, (_, i) => Array.from(b.subarray(i * 601, (i + 1) * 601)))).transpose(),
    );
    for (let i = 0; i < 37; i++) for (let j = 0; j < 23; j++) expect(c[i * 23 + j]).toBeCloseTo(ref.get(i, j), 10);
    const g = rowGram(a, 37, 601);
    const gref = multiplyABt(a, 37, 601, a, 37);
    for (let i = 0; i < g.length; i++) expect(g[i]).toBeCloseTo(gref[i], 10);
    const at = transpose(a, 37, 601);
    expect(multiplyAtB(at, 601, 37, at, 37).every((x, i) => Math.abs(x - gref[i]) < 1e-9)).toBe(true);
    expect(multiply(a, 37, 601, at, 37).every((x, i) => Math.abs(x - gref[i]) < 1e-9)).toBe(true);
  });

  it('Cholesky solves, inverts and gives the log-determinant', () => {
    const x = randomMatrix(12, 40, 3);
    const s = rowGram(x, 12, 40);
    const l = cholesky(s, 12);
    const inv = spdInverse(s, 12);
    const prod = multiply(s, 12, 12, inv, 12);
    for (let i = 0; i < 12; i++) for (let j = 0; j < 12; j++) expect(prod[i * 12 + j]).toBeCloseTo(i === j ? 1 : 0, 10);
    const evd = new EigenvalueDecomposition(new Matrix(Array.from({ length: 12 }, (_, i) => Array.from(s.subarray(i * 12, i * 12 + 12)))));
    const logDet = evd.realEigenvalues.reduce((acc, v) => acc + Math.log(v), 0);
    expect(choleskyLogDet(l, 12)).toBeCloseTo(logDet, 9);
    const rhs = randomMatrix(12, 2, 4);
    const sol = choleskySolve(l, 12, rhs.slice(), 2);
    const back = multiply(s, 12, 12, sol, 2);
    for (let i = 0; i < rhs.length; i++) expect(back[i]).toBeCloseTo(rhs[i], 9);
  });
});

describe('eigenproblems', () => {
  it('Jacobi matches ml-matrix on a small symmetric matrix', () => {
    const x = randomMatrix(20, 30, 5);
    const s = rowGram(x, 20, 30);
    const mine = symmetricEigen(s, 20);
    const ref = new EigenvalueDecomposition(new Matrix(Array.from({ length: 20 }, (_, i) => Array.from(s.subarray(i * 20, i * 20 + 20)))));
    const refValues = [...ref.realEigenvalues].sort((p, q) => q - p);
    for (let i = 0; i < 20; i++) expect(mine.values[i]).toBeCloseTo(refValues[i], 9);
  });

  it('block Lanczos finds the top eigenpairs of a large matrix with a noise-like tail', () => {
    const n = 300;
    // planted spectrum: 5 strong eigenvalues, then a Marchenko–Pastur-like bulk from a Wishart matrix
    const x = randomMatrix(n, 400, 6);
    const s = rowGram(x, n, 400);
    for (let i = 0; i < s.length; i++) s[i] /= 400;
    const u = randomMatrix(n, 5, 7);
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) for (let f = 0; f < 5; f++) s[i * n + j] += (0.2 * (5 - f)) * u[i * 5 + f] * u[j * 5 + f];
    const full = symmetricEigen(s, n);
    const top = topEigenpairs(denseOperator(s, n), 10, { tolerance: 1e-11 });
    for (let j = 0; j < 10; j++) expect(Math.abs(top.values[j] - full.values[j]) / full.values[0]).toBeLessThan(1e-10);
    expect(top.maxResidual).toBeLessThan(1e-10);
  });
});

describe('worker pool', () => {
  it('gives bit-identical products to the single-thread kernel, however the work is split', async () => {
    const { parallelMultiplyABt, sharedFloat64 } = await import('./parallel');
    const n = 301;
    const t = 257;
    const z = sharedFloat64(n * t);
    z.set(randomMatrix(n, t, 9));
    const single = multiplyABt(z, n, t, z, n, undefined, true);
    const parallel = parallelMultiplyABt(z, n, t, z, n, true);
    expect(Array.from(parallel)).toEqual(Array.from(single));
    const block = randomMatrix(11, n, 10);
    const s = sharedFloat64(n * n);
    s.set(single);
    expect(Array.from(parallelMultiplyABt(block, 11, n, s, n))).toEqual(Array.from(multiplyABt(block, 11, n, s, n)));
  });
});
