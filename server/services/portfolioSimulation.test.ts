import { describe, expect, it } from 'vitest';
import { simulatePortfolio } from './portfolioSimulation';
import { monteCarloRisk, parametricTailRisk } from '../engine/risk';
import { loadingsTransposeTimes } from '../engine/lowRank';
import { plantedPanel } from '../engine/planted';
import { createRandom } from '../engine/random';
import type { FactorModel } from '../engine/types';

const n = 60;
const l = 4;
const planted = plantedPanel({ assets: n, observations: 1, factors: l, seed: 314 });
const model: FactorModel = { kind: 'factor', method: 'fa', assets: n, factors: l, mean: planted.mean, loadings: planted.loadings, specificVariance: planted.specificVariance };
const rng = createRandom(9);
const w = Float64Array.from({ length: n }, () => (rng.uniform() < 0.5 ? rng.uniform() : 0));
const exposures = loadingsTransposeTimes(model, w);
let residual = 0;
for (let i = 0; i < n; i++) residual += model.specificVariance[i] * w[i] * w[i];
let factorVariance = 0;
for (const y of exposures) factorVariance += y * y;
const sigma = Math.sqrt(factorVariance + residual);

describe('portfolio-level Monte Carlo', () => {
  it('finds VaR and ES by selection exactly as a full sort would (Acerbi & Tasche 2002 estimator)', () => {
    const draws = 5003;
    const sim = simulatePortfolio({ exposures, residualVariance: residual, meanReturn: 0, includeMean: false, draws, seed: 5, horizon: 4, confidenceLevels: [0.95, 0.99, 0.975] });
    // The same draws, in the same order, valued directly and sorted.
    const r = createRandom(5);
    const z = new Float64Array(l);
    const losses = new Float64Array(draws);
    for (let j = 0; j < draws; j++) {
      r.fillNormal(z);
      let x = Math.sqrt(residual) * r.normal();
      for (let k = 0; k < l; k++) x += exposures[k] * z[k];
      losses[j] = -2 * x; // √4 = 2
    }
    losses.sort();
    for (const level of sim.levels) {
      const m1 = Math.ceil(draws * level.confidence - 1e-9);
      let tail = 0;
      for (let j = m1; j < draws; j++) tail += losses[j];
      expect(level.valueAtRisk).toBe(losses[m1 - 1]);
      expect(level.expectedShortfall).toBeCloseTo(tail / (draws - m1), 14);
    }
  });

  it('agrees in distribution with the engine’s full-vector Monte Carlo and with the normal formulas', () => {
    const draws = 200_000;
    const mine = simulatePortfolio({ exposures, residualVariance: residual, meanReturn: 0, includeMean: false, draws, seed: 21, horizon: 1, confidenceLevels: [0.95, 0.99] });
    const engine = monteCarloRisk(model, [w], { seed: 22, draws, horizon: 1, confidenceLevels: [0.95, 0.99], method: 'panel' })[0]; // whole N-asset return vectors
    // Standard error of a sample volatility ≈ σ/√(2n) ≈ 0.16 % of σ at n = 200 000: allow 1 %.
    expect(Math.abs(mine.simulatedVolatility / sigma - 1)).toBeLessThan(0.01);
    expect(Math.abs(engine.simulatedVolatility / sigma - 1)).toBeLessThan(0.01);
    for (const c of [0.95, 0.99]) {
      const a = mine.levels.find((x) => x.confidence === c)!;
      const b = engine.levels.find((x) => x.confidence === c)!;
      const exact = parametricTailRisk(sigma, 0, 1, c);
      expect(Math.abs(a.valueAtRisk / exact.valueAtRisk - 1)).toBeLessThan(0.02);
      expect(Math.abs(a.expectedShortfall / exact.expectedShortfall - 1)).toBeLessThan(0.02);
      expect(Math.abs(a.valueAtRisk / b.valueAtRisk - 1)).toBeLessThan(0.03);
    }
  });

  it('is reproducible for a seed and refuses too few draws for a tail', () => {
    const input = { exposures, residualVariance: residual, meanReturn: 0, includeMean: false, draws: 2000, seed: 3, horizon: 1, confidenceLevels: [0.99] };
    expect(simulatePortfolio(input)).toEqual(simulatePortfolio(input));
    expect(() => simulatePortfolio({ ...input, draws: 50, confidenceLevels: [0.999] })).toThrow(/too few/);
  });
});
