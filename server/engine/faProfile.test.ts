import { describe, expect, it } from 'vitest';
import { fitFactorAnalysis } from './factorAnalysis';
import { fitProfileFactorAnalysis } from './faProfile';
import { factorLogLikelihoodFromScatter } from './logLikelihood';
import { plantedPanel } from './planted';
import { buildScatter } from './scatter';

describe('profile-likelihood factor analysis (Jöreskog 1967)', () => {
  it('reaches the EM optimum on a panel with more assets than dates, and its profile likelihood is the true one', () => {
    const p = plantedPanel({ assets: 90, observations: 60, factors: 3, seed: 29, noise: 'student-t' });
    const scatter = buildScatter(p.panel);
    const floor = scatter.diagonal.map((x) => 0.005 * x);
    const prof = fitProfileFactorAnalysis(scatter, 3, scatter.diagonal.map((x) => 0.5 * x), floor, { tolerance: 1e-12, parameterTolerance: 1e-7, maxEvaluations: 5000 });
    const em = fitFactorAnalysis(scatter, 3, { algorithm: 'em' });
    expect(prof.converged).toBe(true);
    expect(prof.logLikelihood).toBeGreaterThanOrEqual(em.logLikelihood - 1e-9 * Math.abs(em.logLikelihood));
    // the eigenvalue formula for ℓ(Ψ) agrees with the Woodbury evaluation at (W(Ψ), Ψ)
    const direct = factorLogLikelihoodFromScatter(prof.loadings, prof.specificVariance, 3, scatter);
    expect(Math.abs(direct - prof.logLikelihood) / Math.abs(direct)).toBeLessThan(1e-10);
  });
});
