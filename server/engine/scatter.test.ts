import { describe, expect, it } from 'vitest';
import { buildScatter, scatterFromCovariance } from './scatter';
import { plantedPanel } from './planted';
import { createRandom } from './random';

describe('scatter (1/T second moments)', () => {
  const p = plantedPanel({ assets: 30, observations: 50, factors: 2, seed: 19 });
  it('data form and dense form apply the same S, with weights summing to one', () => {
    const w = { kind: 'exponential', halfLife: 20 } as const;
    const data = buildScatter(p.panel, { weighting: w, form: 'data' });
    const dense = buildScatter(p.panel, { weighting: w, form: 'dense' });
    const block = createRandom(2).fillNormal(new Float64Array(3 * 30));
    const a = data.apply(block, 3);
    const b = dense.apply(block, 3);
    for (let k = 0; k < a.length; k++) expect(Math.abs(a[k] - b[k])).toBeLessThan(1e-15 + 1e-12 * Math.abs(b[k]));
    expect(data.weights.reduce((s, x) => s + x, 0)).toBeCloseTo(1, 14);
    expect(data.effectiveSampleSize).toBeLessThan(50);
    // diag(S) by hand for asset 0
    let m = 0;
    for (let t = 0; t < 50; t++) m += data.weights[t] * p.panel.values[t * 30];
    let v = 0;
    for (let t = 0; t < 50; t++) v += data.weights[t] * (p.panel.values[t * 30] - m) ** 2;
    expect(data.diagonal[0]).toBeCloseTo(v, 15);
  });

  it('rejects missing values and wraps a given covariance', () => {
    const gap = p.panel.values.slice();
    gap[31] = NaN;
    expect(() => buildScatter({ ...p.panel, values: gap })).toThrow(/row 2, asset 2/);
    const s = scatterFromCovariance(Float64Array.from([4, 1, 1, 9]), 2, 100);
    expect(s.trace).toBe(13);
    expect(Array.from(s.apply(Float64Array.from([1, 0]), 1))).toEqual([4, 1]);
  });
});
