import { describe, expect, it } from 'vitest';
import type { DenseCovarianceModel, FactorModel } from './types';
import { sampleReturns, semidefiniteCholesky } from './sampling';
import { createRandom } from './random';
import { denseCovariance } from './lowRank';

const factor: FactorModel = {
  kind: 'factor', method: 'fa', assets: 4, factors: 2,
  mean: Float64Array.from([0.001, 0, -0.001, 0.002]),
  loadings: Float64Array.from([0.02, 0.01, 0.015, -0.01, 0.01, 0.005, 0.025, 0]),
  specificVariance: Float64Array.from([1e-4, 2e-4, 1.5e-4, 0.5e-4]),
};

function sampleMoments(values: Float64Array, t: number, n: number) {
  const mean = new Float64Array(n);
  for (let r = 0; r < t; r++) for (let i = 0; i < n; i++) mean[i] += values[r * n + i] / t;
  const cov = new Float64Array(n * n);
  for (let r = 0; r < t; r++) {
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < n; j++) cov[i * n + j] += ((values[r * n + i] - mean[i]) * (values[r * n + j] - mean[j])) / (t - 1);
    }
  }
  return { mean, cov };
}

describe('generative sampling x = μ + Wz + ε', () => {
  it('is reproducible for a seed, different across seeds, and continues one stream across chunks', () => {
    const a = sampleReturns(factor, { observations: 5, seed: 42 });
    const b = sampleReturns(factor, { observations: 5, seed: 42 });
    const c = sampleReturns(factor, { observations: 5, seed: 43 });
    expect(Array.from(a.values)).toEqual(Array.from(b.values));
    expect(Array.from(a.values)).not.toEqual(Array.from(c.values));
    const rng = createRandom(42);
    const first = sampleReturns(factor, { observations: 2, random: rng });
    const rest = sampleReturns(factor, { observations: 3, random: rng });
    expect([...first.values, ...rest.values]).toEqual(Array.from(a.values));
    expect(() => sampleReturns(factor, { observations: 2 })).toThrow(/seed/);
  });

  it('has the model mean and covariance (within sampling error)', () => {
    const t = 60_000;
    const panel = sampleReturns(factor, { observations: t, seed: 1 });
    const { mean, cov } = sampleMoments(panel.values, t, 4);
    const sigma = denseCovariance(factor);
    for (let i = 0; i < 4; i++) {
      // SE of a mean: √(Σᵢᵢ/T); allow 4 SE.
      expect(Math.abs(mean[i] - factor.mean[i])).toBeLessThan(4 * Math.sqrt(sigma[i * 4 + i] / t));
      for (let j = 0; j < 4; j++) {
        // SE of a Gaussian sample covariance: √((ΣᵢᵢΣⱼⱼ + Σᵢⱼ²)/T) (Anderson 2003, section 3.4); allow 4 SE.
        const se = Math.sqrt((sigma[i * 4 + i] * sigma[j * 4 + j] + sigma[i * 4 + j] ** 2) / t);
        expect(Math.abs(cov[i * 4 + j] - sigma[i * 4 + j])).toBeLessThan(4 * se);
      }
    }
  });

  it('samples a dense model through its Cholesky factor, including a singular one', () => {
    const sigma = denseCovariance(factor);
    const dense: DenseCovarianceModel = { kind: 'dense', method: 'sample', assets: 4, mean: factor.mean, covariance: sigma };
    const t = 60_000;
    const { cov } = sampleMoments(sampleReturns(dense, { observations: t, seed: 2 }).values, t, 4);
    for (let j = 0; j < 16; j++) expect(Math.abs(cov[j] - sigma[j])).toBeLessThan(4 * Math.sqrt((2 * Math.max(...sigma) ** 2) / t));
    // Rank-one Σ = v vᵀ with v = (1, 2): C = [[1, 0], [2, 0]]; every draw has x₂ = 2 x₁.
    const c = semidefiniteCholesky(Float64Array.from([1, 2, 2, 4]), 2);
    expect(Array.from(c)).toEqual([1, 0, 2, 0]);
    const singular: DenseCovarianceModel = { kind: 'dense', method: 'sample', assets: 2, mean: new Float64Array(2), covariance: Float64Array.from([1, 2, 2, 4]) };
    const x = sampleReturns(singular, { observations: 3, seed: 4 }).values;
    for (let r = 0; r < 3; r++) expect(x[r * 2 + 1]).toBeCloseTo(2 * x[r * 2], 14);
    expect(() => semidefiniteCholesky(Float64Array.from([1, 2, 2, 1]), 2)).toThrow(/semidefinite/);
  });
});
