import { describe, expect, it } from 'vitest';
import { plantedCovariance, plantedPanel } from './planted';

describe('plantedPanel', () => {
  it('is reproducible and its sample covariance approaches the planted one', () => {
    const a = plantedPanel({ assets: 5, observations: 20000, factors: 2, seed: 3, noise: 'student-t' });
    const b = plantedPanel({ assets: 5, observations: 20000, factors: 2, seed: 3, noise: 'student-t' });
    expect(a.panel.values).toEqual(b.panel.values);
    const sigma = plantedCovariance(a);
    const { values, observations: t, assets: n } = a.panel;
    for (let i = 0; i < n; i++) {
      let mi = 0;
      for (let r = 0; r < t; r++) mi += values[r * n + i];
      mi /= t;
      let v = 0;
      for (let r = 0; r < t; r++) v += (values[r * n + i] - mi) ** 2;
      v /= t - 1;
      expect(Math.abs(v / sigma[i * n + i] - 1)).toBeLessThan(0.06);
    }
  });

  it('hides the requested share of entries and late listings', () => {
    const p = plantedPanel({ assets: 40, observations: 200, factors: 3, seed: 5, missingShare: 0.05, lateListingShare: 0.2 });
    let nan = 0;
    for (const x of p.panel.values) if (Number.isNaN(x)) nan++;
    expect(nan).toBe(p.hiddenEntries);
    expect(nan).toBeGreaterThan(0.05 * 40 * 200);
    expect(p.complete.values.every((x) => Number.isFinite(x))).toBe(true);
  });
});
