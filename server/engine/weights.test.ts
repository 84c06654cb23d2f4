import { describe, expect, it } from 'vitest';
import { decayFactor, describeWeighting, effectiveSampleSize, observationWeights } from './weights';

describe('observation weights', () => {
  it('equal weights have effective sample size T', () => {
    const w = observationWeights(250);
    expect(w.reduce((a, b) => a + b, 0)).toBeCloseTo(1, 14);
    expect(effectiveSampleSize(w)).toBeCloseTo(250, 10);
  });

  it('exponential weights halve every half-life and match the closed-form effective size', () => {
    const h = 20;
    const t = 500;
    const w = observationWeights(t, { kind: 'exponential', halfLife: h });
    expect(w[t - 1 - h] / w[t - 1]).toBeCloseTo(0.5, 12);
    expect(w.reduce((a, b) => a + b, 0)).toBeCloseTo(1, 14);
    // Closed form for geometric weights: n_eff = (1−λ^T)² (1−λ²) / ((1−λ)² (1−λ^{2T})) (Kish 1965 applied to λ^k).
    const l = decayFactor(h);
    const closed = ((1 - l ** t) ** 2 * (1 - l * l)) / ((1 - l) ** 2 * (1 - l ** (2 * t)));
    expect(effectiveSampleSize(w)).toBeCloseTo(closed, 8);
    expect(describeWeighting(t, { kind: 'exponential', halfLife: h }).decay).toBeCloseTo(0.5 ** (1 / 20), 15);
  });

  it('rejects a bad half-life', () => {
    expect(() => observationWeights(10, { kind: 'exponential', halfLife: 0 })).toThrow(/half-life/);
  });
});
