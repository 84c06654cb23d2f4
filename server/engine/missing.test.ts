import { describe, expect, it } from 'vitest';
import { fitModel } from './fit';
import { fitWithMissing } from './missing';
import { lowRankPlusDiagonal, relativeFrobenius } from './linalg/dense';
import { plantedPanel } from './planted';
import { createRandom } from './random';
import type { FactorModel } from './types';

const n = 20;
const t = 500;

function hiddenPanel() {
  const p = plantedPanel({ assets: n, observations: t, factors: 3, seed: 31, noise: 'student-t' });
  const v = p.panel.values;
  let hidden = 0;
  for (let r = 0; r < 150; r++) {
    v[r * n] = NaN; // asset 1 listed late: its first 150 of 500 dates are missing
    hidden++;
  }
  const rng = createRandom(77);
  while (hidden < 0.1 * n * t) {
    const k = rng.integer(n * t);
    if (!Number.isNaN(v[k])) {
      v[k] = NaN;
      hidden++;
    }
  }
  return p;
}
const sigma = (m: FactorModel) => lowRankPlusDiagonal(m.loadings, n, m.factors, m.specificVariance);

describe('missing data and short histories (EM over observed entries)', () => {
  it.each(['fa', 'ppca'] as const)('%s: 10 %% hidden incl. a late listing stays far closer to the full-data fit than dropping incomplete dates', (method) => {
    // Measured on this panel (20 assets × 500 dates, 3 planted factors, Student-t noise, seed 31):
    // relative Frobenius distance of Σ to the full-data fit — FA: EM 3.6e-2 vs dropping incomplete dates 4.5e-1
    // (only 47 complete dates remain); PPCA: EM 6.7e-2 vs 4.7e-1.
    const p = hiddenPanel();
    const full = fitModel(p.complete, { method, factors: 3 });
    const em = fitModel(p.panel, { method, factors: 3 });
    const drop = fitModel(p.panel, { method, factors: 3, missing: 'drop-incomplete' });
    expect(em.diagnostics.converged).toBe(true);
    expect(em.diagnostics.missingEntries).toBe(1000);
    expect(drop.diagnostics.observations).toBeLessThan(60);
    const emGap = relativeFrobenius(sigma(em.model as FactorModel), sigma(full.model as FactorModel));
    const dropGap = relativeFrobenius(sigma(drop.model as FactorModel), sigma(full.model as FactorModel));
    expect(emGap).toBeLessThan(0.1);
    expect(dropGap).toBeGreaterThan(4 * emGap);
  });

  it('on a complete panel the missing-data EM reaches the complete-data optimum', () => {
    const p = plantedPanel({ assets: 15, observations: 200, factors: 2, seed: 9 });
    const complete = fitModel(p.panel, { method: 'fa', factors: 2 });
    const viaEm = fitWithMissing(p.panel, { method: 'fa', factors: 2 });
    expect(Math.abs(viaEm.logLikelihood - complete.diagnostics.logLikelihood!) / Math.abs(complete.diagnostics.logLikelihood!)).toBeLessThan(1e-9);
    expect(relativeFrobenius(lowRankPlusDiagonal(viaEm.loadings, 15, 2, viaEm.specificVariance), lowRankPlusDiagonal((complete.model as FactorModel).loadings, 15, 2, (complete.model as FactorModel).specificVariance))).toBeLessThan(1e-4);
  });

  it('the reported log-likelihood is the observed-data likelihood at the fitted model', () => {
    const p = hiddenPanel();
    const em = fitModel(p.panel, { method: 'fa', factors: 3 });
    const direct = fitWithMissing(p.panel, { method: 'fa', factors: 3 });
    expect(Math.abs(em.diagnostics.logLikelihood! - direct.logLikelihood) / Math.abs(direct.logLikelihood)).toBeLessThan(1e-8);
  });
});
