import { describe, expect, it } from 'vitest';
import { chooseFactorCount, freeParameters } from './factorCount';
import { plantedPanel } from './planted';

describe('choosing the number of factors', () => {
  it('counts FA free parameters as N·L + N − L(L−1)/2 (+N means) (Lawley & Maxwell 1971)', () => {
    expect(freeParameters(10, 1, false)).toBe(20);
    expect(freeParameters(10, 3, false)).toBe(37);
    expect(freeParameters(10, 3, true)).toBe(47);
  });

  it('recovers the planted number of factors on a clear panel', () => {
    const p = plantedPanel({ assets: 40, observations: 400, factors: 3, seed: 17 });
    const res = chooseFactorCount(p.panel, { maxFactors: 6, heldOutBlocks: 4 });
    expect(res.rows).toHaveLength(6);
    expect(res.best.bic).toBe(3);
    expect(res.recommended).toBe(3);
    expect(res.eigenvaluesAboveEdge).toBeGreaterThanOrEqual(1);
    expect(res.reason).toMatch(/held-out/);
    // log-likelihood never falls as L grows (nested models at their optima)
    for (let k = 1; k < 6; k++) expect(res.rows[k].logLikelihood).toBeGreaterThanOrEqual(res.rows[k - 1].logLikelihood - 1e-6);
  });
});
