import { describe, expect, it } from 'vitest';
import { fitModel } from './fit';
import { plantedPanel } from './planted';
import type { DenseCovarianceModel, FactorModel } from './types';

describe('fitModel', () => {
  const p = plantedPanel({ assets: 25, observations: 150, factors: 3, seed: 44 });

  it('fits every method and reports diagnostics', () => {
    for (const method of ['fa', 'ppca', 'sample', 'ledoit-wolf'] as const) {
      const r = fitModel(p.panel, { method, factors: 3, weighting: { kind: 'exponential', halfLife: 60 } });
      expect(r.diagnostics.method).toBe(method);
      expect(r.diagnostics.effectiveSampleSize).toBeLessThan(150);
      expect(r.diagnostics.logLikelihood).not.toBeNull();
      expect(r.diagnostics.spectrum.length).toBeGreaterThan(0);
      if (r.model.kind === 'factor') expect(r.model.loadings).toHaveLength(25 * 3);
      else expect((r.model as DenseCovarianceModel).covariance).toHaveLength(25 * 25);
    }
  });

  it('zero mean keeps μ = 0', () => {
    const r = fitModel(p.panel, { method: 'fa', factors: 2, mean: 'zero' });
    expect(Array.from((r.model as FactorModel).mean).every((x) => x === 0)).toBe(true);
  });

  it('rejects bad input with a clear message', () => {
    expect(() => fitModel(p.panel, { method: 'fa', factors: 25 })).toThrow(/smaller than the number of assets/);
    expect(() => fitModel(p.panel, { method: 'ppca' })).toThrow(/factors/);
    expect(() => fitModel({ values: new Float64Array(25), observations: 1, assets: 25 }, { method: 'sample' })).toThrow(/at least 2 observations/);
    const bad = p.panel.values.slice();
    bad[7] = Infinity;
    expect(() => fitModel({ ...p.panel, values: bad }, { method: 'sample' })).toThrow(/row 1, asset 8/);
    const gap = p.panel.values.slice();
    gap[3] = NaN;
    expect(() => fitModel({ ...p.panel, values: gap }, { method: 'fa', factors: 2, missing: 'reject' })).toThrow(/missing/);
  });

  it('flags a singular sample covariance when there are fewer dates than assets', () => {
    const q = plantedPanel({ assets: 40, observations: 20, factors: 2, seed: 1 });
    const r = fitModel(q.panel, { method: 'sample' });
    expect(r.diagnostics.logLikelihood).toBeNull();
    expect(r.diagnostics.flags).toContain('singular-covariance');
    expect(r.diagnostics.flags).toContain('fewer-observations-than-assets');
    const lw = fitModel(q.panel, { method: 'ledoit-wolf' });
    expect(lw.diagnostics.logLikelihood).not.toBeNull();
  });
});
