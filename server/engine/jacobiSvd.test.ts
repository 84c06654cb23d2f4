import { describe, expect, it } from 'vitest';
import { orthonormalBasis, singularValues, thinSvd } from './jacobiSvd';
import { multiply, multiplyAtB } from './linalg/dense';
import { createRandom } from './random';

describe('one-sided Jacobi SVD', () => {
  it('matches a hand-worked 3 × 2 example', () => {
    // A = [[3, 0], [4, 0], [0, 2]]: columns are orthogonal with norms 5 and 2, so σ = (5, 2), V = I.
    const svd = thinSvd(Float64Array.from([3, 0, 4, 0, 0, 2]), 3, 2);
    expect(Array.from(svd.singularValues)).toEqual([5, 2]);
    expect(Array.from(svd.u)).toEqual([0.6, 0, 0.8, 0, 0, 1]);
  });
  it('reconstructs A = U diag(σ) Vᵀ with orthonormal factors on a random 40 × 6 matrix', () => {
    const rng = createRandom(12);
    const a = new Float64Array(240);
    rng.fillNormal(a);
    const { u, v, singularValues: s } = thinSvd(a, 40, 6);
    const us = u.slice();
    for (let i = 0; i < 40; i++) for (let k = 0; k < 6; k++) us[i * 6 + k] *= s[k];
    const vt = new Float64Array(36);
    for (let i = 0; i < 6; i++) for (let j = 0; j < 6; j++) vt[j * 6 + i] = v[i * 6 + j];
    const back = multiply(us, 40, 6, vt, 6);
    for (let j = 0; j < 240; j++) expect(Math.abs(back[j] - a[j])).toBeLessThan(1e-13);
    const utu = multiplyAtB(u, 40, 6, u, 6);
    for (let i = 0; i < 6; i++) for (let j = 0; j < 6; j++) expect(Math.abs(utu[i * 6 + j] - (i === j ? 1 : 0))).toBeLessThan(1e-14);
    for (let k = 1; k < 6; k++) expect(s[k]).toBeLessThanOrEqual(s[k - 1]);
  });
  it('handles wide matrices through the transpose', () => {
    // [[1, 0, 0], [0, 0, 2]] has singular values 2 and 1.
    expect(Array.from(singularValues(Float64Array.from([1, 0, 0, 0, 0, 2]), 2, 3))).toEqual([2, 1]);
  });
});

describe('Gram–Schmidt orthonormal basis', () => {
  it('drops dependent columns and spans the rest', () => {
    // Columns (1, 1, 0), (2, 2, 0), (0, 1, 1): rank 2.
    const { basis, rank } = orthonormalBasis(Float64Array.from([1, 2, 0, 1, 2, 1, 0, 0, 1]), 3, 3);
    expect(rank).toBe(2);
    const gram = multiplyAtB(basis, 3, 2, basis, 2);
    expect(Math.abs(gram[0] - 1) + Math.abs(gram[1]) + Math.abs(gram[3] - 1)).toBeLessThan(1e-15);
    expect(basis[0]).toBeCloseTo(Math.SQRT1_2, 15);
  });
});
