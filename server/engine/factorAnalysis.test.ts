import { describe, expect, it } from 'vitest';
import { fitFactorAnalysis } from './factorAnalysis';
import { factorLogLikelihoodFromScatter, factorModelLogLikelihood } from './logLikelihood';
import { lowRankPlusDiagonal, relativeFrobenius } from './linalg/dense';
import { plantedPanel } from './planted';
import { buildScatter } from './scatter';
import { createRandom } from './random';
import { fitModel } from './fit';
import type { FactorModel } from './types';

/** A random orthogonal L × L matrix (QR of a Gaussian matrix by Gram–Schmidt). */
function randomOrthogonal(l: number, seed: number): Float64Array {
  const rng = createRandom(seed);
  const q = rng.fillNormal(new Float64Array(l * l)); // columns
  for (let j = 0; j < l; j++) {
    for (let k = 0; k < j; k++) {
      let d = 0;
      for (let i = 0; i < l; i++) d += q[i * l + j] * q[i * l + k];
      for (let i = 0; i < l; i++) q[i * l + j] -= d * q[i * l + k];
    }
    let nrm = 0;
    for (let i = 0; i < l; i++) nrm += q[i * l + j] ** 2;
    for (let i = 0; i < l; i++) q[i * l + j] /= Math.sqrt(nrm);
  }
  return q;
}

describe('maximum-likelihood factor analysis', () => {
  const planted = plantedPanel({ assets: 40, observations: 300, factors: 3, seed: 12, noise: 'student-t' });
  const scatter = buildScatter(planted.panel);

  it('is invariant to rotating the loadings: likelihood and covariance to 1e-12 (identity of the model)', () => {
    const fa = fitFactorAnalysis(scatter, 3);
    const r = randomOrthogonal(3, 99);
    const wr = new Float64Array(40 * 3);
    for (let i = 0; i < 40; i++) for (let k = 0; k < 3; k++) for (let a = 0; a < 3; a++) wr[i * 3 + k] += fa.loadings[i * 3 + a] * r[a * 3 + k];
    const ll1 = factorLogLikelihoodFromScatter(fa.loadings, fa.specificVariance, 3, scatter);
    const ll2 = factorLogLikelihoodFromScatter(wr, fa.specificVariance, 3, scatter);
    expect(Math.abs(ll1 - ll2) / Math.abs(ll1)).toBeLessThan(1e-12);
    const s1 = lowRankPlusDiagonal(fa.loadings, 40, 3, fa.specificVariance);
    const s2 = lowRankPlusDiagonal(wr, 40, 3, fa.specificVariance);
    expect(relativeFrobenius(s2, s1)).toBeLessThan(1e-12);
    // and the fit's own likelihood equals a direct evaluation on the data (Woodbury vs per-date sum)
    const model: FactorModel = { kind: 'factor', method: 'fa', assets: 40, factors: 3, mean: scatter.mean, loadings: fa.loadings, specificVariance: fa.specificVariance };
    expect(Math.abs(factorModelLogLikelihood(model, planted.panel) - fa.logLikelihood) / Math.abs(fa.logLikelihood)).toBeLessThan(1e-10);
  });

  it('returns the canonical orientation: WᵀΨ⁻¹W diagonal, decreasing column variance, largest loading positive', () => {
    const fa = fitFactorAnalysis(scatter, 3);
    const l = 3;
    const g = new Float64Array(9);
    const variance = [0, 0, 0];
    for (let i = 0; i < 40; i++) for (let a = 0; a < l; a++) {
      variance[a] += fa.loadings[i * l + a] ** 2;
      for (let b = 0; b < l; b++) g[a * l + b] += (fa.loadings[i * l + a] * fa.loadings[i * l + b]) / fa.specificVariance[i];
    }
    for (let a = 0; a < l; a++) for (let b = 0; b < l; b++) if (a !== b) expect(Math.abs(g[a * l + b]) / Math.sqrt(g[a * l + a] * g[b * l + b])).toBeLessThan(1e-8);
    expect(variance[0]).toBeGreaterThanOrEqual(variance[1]);
    expect(variance[1]).toBeGreaterThanOrEqual(variance[2]);
    for (let a = 0; a < l; a++) {
      let best = 0;
      for (let i = 0; i < 40; i++) if (Math.abs(fa.loadings[i * l + a]) > Math.abs(fa.loadings[best * l + a])) best = i;
      expect(fa.loadings[best * l + a]).toBeGreaterThan(0);
    }
  });

  it('with L = 0 is the diagonal model Ψ = diag(S)', () => {
    const fa = fitFactorAnalysis(scatter, 0);
    expect(Array.from(fa.specificVariance)).toEqual(Array.from(scatter.diagonal));
    const direct = factorLogLikelihoodFromScatter(new Float64Array(0), scatter.diagonal, 0, scatter);
    expect(Math.abs(fa.logLikelihood - direct) / Math.abs(direct)).toBeLessThan(1e-14);
  });

  it('SQUAREM reaches the plain-EM optimum with far fewer evaluations, never lowering the likelihood between cycles', () => {
    const fast = fitFactorAnalysis(scatter, 3, { algorithm: 'em' });
    const slow = fitFactorAnalysis(scatter, 3, { algorithm: 'em', accelerate: false });
    const profile = fitFactorAnalysis(scatter, 3);
    // Jöreskog's profile iteration (the default) reaches the same optimum
    expect(Math.abs(profile.logLikelihood - slow.logLikelihood) / Math.abs(slow.logLikelihood)).toBeLessThan(1e-9);
    expect(fast.converged && slow.converged).toBe(true);
    expect(Math.abs(fast.logLikelihood - slow.logLikelihood) / Math.abs(slow.logLikelihood)).toBeLessThan(1e-9);
    expect(fast.evaluations).toBeLessThan(slow.evaluations);
    for (let k = 1; k < fast.trace.length; k++) expect(fast.trace[k]).toBeGreaterThanOrEqual(fast.trace[k - 1] - 1e-9 * Math.abs(fast.trace[k]));
  });

  it('is deterministic bit for bit', () => {
    const a = fitModel(planted.panel, { method: 'fa', factors: 3 });
    const b = fitModel(planted.panel, { method: 'fa', factors: 3 });
    expect((a.model as FactorModel).loadings).toEqual((b.model as FactorModel).loadings);
    expect((a.model as FactorModel).specificVariance).toEqual((b.model as FactorModel).specificVariance);
    expect(a.diagnostics.trace).toEqual(b.diagnostics.trace);
  });

  it('flags Heywood cases when an asset is almost entirely explained by the factors', () => {
    // asset 0 copies asset 1 plus tiny noise: its uniqueness would go to ~0 and is held at the floor
    const p = plantedPanel({ assets: 12, observations: 400, factors: 2, seed: 4 });
    const v = p.panel.values;
    const rng = createRandom(8);
    for (let t = 0; t < 400; t++) v[t * 12] = v[t * 12 + 1] + 1e-6 * rng.normal();
    const fit = fitModel(p.panel, { method: 'fa', factors: 2 });
    expect(fit.diagnostics.heywood[0] || fit.diagnostics.heywood[1]).toBe(true);
    expect(fit.diagnostics.flags.some((f) => f.startsWith('heywood-cases'))).toBe(true);
  });

  it('reports progress and stops when the progress callback throws', () => {
    const seen: number[] = [];
    const p = plantedPanel({ assets: 60, observations: 200, factors: 4, seed: 21 });
    expect(() =>
      fitModel(p.panel, { method: 'fa', factors: 6 }, {
        onProgress: (progress) => {
          seen.push(progress.iteration);
          if (seen.length >= 1) throw new Error('cancelled by user');
        },
      }),
    ).toThrow(/cancelled/);
    expect(seen.length).toBe(1);
  });
});
