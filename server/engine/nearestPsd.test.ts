import { describe, expect, it } from 'vitest';
import { nearestPsdCovariance } from './nearestPsd';
import { symmetricEigen } from './linalg/eigen';

describe('nearest PSD covariance (Higham 2002)', () => {
  it('leaves a positive-definite covariance unchanged', () => {
    const c = Float64Array.from([4, 1, 0.5, 1, 9, 2, 0.5, 2, 16]);
    const fix = nearestPsdCovariance(c, 3);
    expect(fix.relativeChange).toBeLessThan(1e-14);
  });

  it('repairs the classic indefinite unit-diagonal matrix to a PSD correlation matrix', () => {
    // Higham (2002) §1 example family: pairwise correlations 0.9, 0.9, −0.9 cannot coexist.
    const c = Float64Array.from([1, 0.9, -0.9, 0.9, 1, 0.9, -0.9, 0.9, 1]);
    const fix = nearestPsdCovariance(c, 3);
    expect(symmetricEigen(fix.matrix, 3).values[2]).toBeGreaterThan(-1e-12);
    for (let i = 0; i < 3; i++) expect(fix.matrix[i * 3 + i]).toBeCloseTo(1, 12);
    expect(fix.relativeChange).toBeGreaterThan(0.05);
  });
});
