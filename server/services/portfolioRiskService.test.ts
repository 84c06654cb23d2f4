import { describe, expect, it } from 'vitest';
import { shrinkageAsScaledSample } from './portfolioRiskService';
import { fitModel } from '../engine/fit';
import { plantedPanel } from '../engine/planted';
import { createRandom } from '../engine/random';
import type { DenseCovarianceModel, ReturnsPanel, Weighting } from '../engine/types';

// Invented planted-factor panels (test data, not market data).
const n = 40;
const t = 120;

function quadratic(c: Float64Array, w: Float64Array): number {
  let v = 0;
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) v += w[i] * c[i * n + j] * w[j];
  return v;
}

function comparisons(panel: ReturnsPanel, weighting: Weighting) {
  // The same options as the risk service's comparison covariances.
  const options = { weighting, mean: 'sample' as const, missing: 'pairwise' as const, denseLogLikelihood: false, spectrumSize: 1 };
  return {
    sample: fitModel(panel, { method: 'sample', ...options }).model as DenseCovarianceModel,
    shrunk: fitModel(panel, { method: 'ledoit-wolf', ...options }).model as DenseCovarianceModel,
  };
}

describe('Ledoit–Wolf as a scaled sample matrix plus a ridge (Ledoit & Wolf 2004: (1 − δ) S + δ μ I)', () => {
  const rng = createRandom(17);
  const w = Float64Array.from({ length: n }, () => rng.uniform() - 0.3);
  const sumSquares = w.reduce((s, x) => s + x * x, 0);

  for (const weighting of [{ kind: 'equal' }, { kind: 'exponential', halfLife: 30 }] as Weighting[]) {
    it(`gives each portfolio's LW variance from its sample variance (${weighting.kind} weights)`, () => {
      const { sample, shrunk } = comparisons(plantedPanel({ assets: n, observations: t, factors: 3, seed: 5 }).panel, weighting);
      const identity = shrinkageAsScaledSample(sample, shrunk);
      expect(identity).not.toBeNull();
      const viaIdentity = identity!.scale * quadratic(sample.covariance, w) + identity!.ridge * sumSquares;
      expect(Math.abs(viaIdentity / quadratic(shrunk.covariance, w) - 1)).toBeLessThan(1e-12);
      expect(identity!.scale).toBeGreaterThan(0);
      expect(identity!.scale).toBeLessThanOrEqual(1 + 1e-12);
      expect(identity!.ridge).toBeGreaterThanOrEqual(0);
    });
  }

  it('agrees whenever it answers on a panel with missing values, and refuses matrices that are not so related', () => {
    const planted = plantedPanel({ assets: n, observations: t, factors: 3, seed: 6 });
    const values = planted.panel.values.slice();
    for (let k = 0; k < values.length; k += 7) values[k] = NaN;
    const { sample, shrunk } = comparisons({ ...planted.panel, values }, { kind: 'equal' });
    const identity = shrinkageAsScaledSample(sample, shrunk);
    if (identity) expect(Math.abs((identity.scale * quadratic(sample.covariance, w) + identity.ridge * sumSquares) / quadratic(shrunk.covariance, w) - 1)).toBeLessThan(1e-12);
    const other = comparisons(plantedPanel({ assets: n, observations: t, factors: 3, seed: 7 }).panel, { kind: 'equal' });
    expect(shrinkageAsScaledSample(sample, other.shrunk)).toBeNull();
  });
});
