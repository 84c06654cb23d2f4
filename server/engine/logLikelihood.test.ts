import { describe, expect, it } from 'vitest';
import { denseLogLikelihood, factorLogLikelihoodFromScatter, factorModelLogLikelihood } from './logLikelihood';
import { lowRankPlusDiagonal } from './linalg/dense';
import { createRandom } from './random';
import { plantedPanel } from './planted';
import { buildScatter } from './scatter';
import type { FactorModel } from './types';

describe('Gaussian log-likelihoods', () => {
  const rng = createRandom(3);
  const n = 12;
  const l = 3;
  const loadings = rng.fillNormal(new Float64Array(n * l)).map((x) => 0.01 * x);
  const specificVariance = new Float64Array(n).map(() => 1e-4 * (0.5 + rng.uniform()));
  const p = plantedPanel({ assets: n, observations: 90, factors: 3, seed: 8, missingShare: 0.1 });
  const model: FactorModel = { kind: 'factor', method: 'fa', assets: n, factors: l, mean: new Float64Array(n).fill(0.0003), loadings, specificVariance };

  it('Woodbury + determinant lemma equal the dense Cholesky evaluation, with missing entries marginalised', () => {
    const dense = lowRankPlusDiagonal(loadings, n, l, specificVariance);
    const a = factorModelLogLikelihood(model, p.panel);
    const b = denseLogLikelihood(dense, model.mean, p.panel);
    expect(Math.abs(a - b) / Math.abs(b)).toBeLessThan(1e-11);
  });

  it('the scatter form (1/T convention, total over dates) equals the per-date sum at the scatter mean', () => {
    const scatter = buildScatter(p.complete);
    const atMean: FactorModel = { ...model, mean: scatter.mean };
    const a = factorLogLikelihoodFromScatter(loadings, specificVariance, l, scatter);
    const b = factorModelLogLikelihood(atMean, p.complete);
    expect(Math.abs(a - b) / Math.abs(b)).toBeLessThan(1e-11);
  });

  it('a singular dense covariance has log-likelihood −∞', () => {
    const zero = new Float64Array(n * n);
    expect(denseLogLikelihood(zero, model.mean, p.complete)).toBe(-Infinity);
  });
});
