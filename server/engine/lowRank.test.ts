import { describe, expect, it } from 'vitest';
import type { FactorModel } from './types';
import { capacitanceMatrix, covarianceTimes, denseCovariance, factorPrecision } from './lowRank';
import { plantedPanel } from './planted';

describe('low-rank-plus-diagonal products', () => {
  it('computes Σw and M = I + WᵀΨ⁻¹W for a hand-worked model', () => {
    // W = (1, 2)ᵀ, Ψ = (1, 4): Σ = [[2, 2], [2, 8]], Σ(1, 1) = (4, 10); M = 1 + 1/1 + 4/4 = 3.
    const m: FactorModel = { kind: 'factor', method: 'fa', assets: 2, factors: 1, mean: new Float64Array(2), loadings: Float64Array.from([1, 2]), specificVariance: Float64Array.from([1, 4]) };
    expect(Array.from(covarianceTimes(m, [1, 1]))).toEqual([4, 10]);
    expect(Array.from(capacitanceMatrix(m))).toEqual([3]);
    // Σ⁻¹ = [[8, −2], [−2, 2]] / 12, so Σ⁻¹(1, 1) = (0.5, 0).
    const x = factorPrecision(m)([1, 1]);
    expect(x[0]).toBeCloseTo(0.5, 15);
    expect(x[1]).toBeCloseTo(0, 15);
  });
  it('inverts Σ by the Woodbury identity: Σ (Σ⁻¹ v) = v', () => {
    const planted = plantedPanel({ assets: 50, observations: 2, factors: 4, seed: 2 });
    const m: FactorModel = { kind: 'factor', method: 'fa', assets: 50, factors: 4, mean: new Float64Array(50), loadings: planted.loadings, specificVariance: planted.specificVariance };
    const v = Float64Array.from({ length: 50 }, (_, i) => Math.cos(i));
    const back = covarianceTimes(m, factorPrecision(m)(v));
    for (let i = 0; i < 50; i++) expect(Math.abs(back[i] - v[i])).toBeLessThan(1e-12);
    // The dense product agrees with the low-rank one.
    const sigma = denseCovariance(m);
    const w = Float64Array.from({ length: 50 }, (_, i) => Math.sin(i));
    const lowRank = covarianceTimes(m, w);
    for (let i = 0; i < 50; i++) {
      let s = 0;
      for (let j = 0; j < 50; j++) s += sigma[i * 50 + j] * w[j];
      expect(Math.abs(s - lowRank[i])).toBeLessThan(1e-17);
    }
  });
});
