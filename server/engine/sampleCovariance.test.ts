import { describe, expect, it } from 'vitest';
import { sampleCovariance } from './sampleCovariance';
import { nearestPsdCovariance } from './nearestPsd';
import { tryCholesky } from './linalg/cholesky';
import { symmetricEigen } from './linalg/eigen';
import { ledoitWolf } from './ledoitWolf';
import { plantedPanel } from './planted';

describe('sample covariance with missing data', () => {
  it('pairwise-complete estimate equals the complete-data one on the pairs both observed', () => {
    const p = plantedPanel({ assets: 6, observations: 120, factors: 2, seed: 3, missingShare: 0.1 });
    const res = sampleCovariance(p.panel);
    expect(res.pairwise).toBe(true);
    // entry (0,1) by hand over dates where both are observed
    const v = p.panel.values;
    const rows = [];
    for (let r = 0; r < 120; r++) if (!Number.isNaN(v[r * 6]) && !Number.isNaN(v[r * 6 + 1])) rows.push(r);
    const m0 = rows.reduce((s, r) => s + v[r * 6], 0) / rows.length;
    const m1 = rows.reduce((s, r) => s + v[r * 6 + 1], 0) / rows.length;
    const c01 = rows.reduce((s, r) => s + (v[r * 6] - m0) * (v[r * 6 + 1] - m1), 0) / (rows.length - 1);
    if (!res.repairedToPsd) expect(res.covariance[1]).toBeCloseTo(c01, 14);
  });

  it('repairs an indefinite pairwise matrix to the nearest PSD one keeping variances (Higham 2002)', () => {
    // A classic indefinite "correlation" matrix (Higham 2002, §1: three pairwise correlations that cannot coexist).
    const c = Float64Array.from([1, 0.9, -0.9, 0.9, 1, 0.9, -0.9, 0.9, 1].map((x, k) => x * [2, 3, 4][Math.floor(k / 3)] * [2, 3, 4][k % 3]));
    expect(tryCholesky(c, 3)).toBeNull();
    const fix = nearestPsdCovariance(c, 3);
    expect(symmetricEigen(fix.matrix, 3).values[2]).toBeGreaterThan(-1e-12);
    for (let i = 0; i < 3; i++) expect(fix.matrix[i * 3 + i]).toBeCloseTo(c[i * 3 + i], 10);
    expect(fix.minimumEigenvalueBefore).toBeLessThan(0);
  });
});

describe('Ledoit–Wolf with weights', () => {
  it('the general weighted formula reduces to the equal-weight one as the half-life grows', () => {
    const p = plantedPanel({ assets: 30, observations: 80, factors: 3, seed: 6 });
    const equal = ledoitWolf(p.panel);
    const nearlyEqual = ledoitWolf(p.panel, { weighting: { kind: 'exponential', halfLife: 1e9 } });
    expect(Math.abs(equal.shrinkage - nearlyEqual.shrinkage)).toBeLessThan(1e-6);
    expect(equal.shrinkage).toBeGreaterThan(0);
    expect(equal.shrinkage).toBeLessThan(1);
  });
});
