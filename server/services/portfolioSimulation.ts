/**
 * Monte Carlo VaR/ES of ONE portfolio from a fitted model's generative form, simulated in the portfolio's own
 * low dimension. Pure, no I/O.
 *
 * Factor model x = μ + W z + ε, z ~ N(0, I_L), ε ~ N(0, diag Ψ) (Tipping & Bishop 1999, eq. (2)): the portfolio
 * return is r = wᵀx = wᵀμ + (Wᵀw)ᵀ z + wᵀε with wᵀε ~ N(0, Σᵢ Ψᵢwᵢ²) independent of z. Drawing z (L normals) and
 * one normal for the specific part gives r exactly in distribution, at O(L) per draw instead of O(N·L) for a full
 * return vector (the engine's monteCarloRisk draws whole vectors, for many portfolios on the same draws).
 * Dense model x ~ N(μ, Σ): r ~ N(wᵀμ, wᵀΣw), one normal per draw.
 * h periods: h·m + √h·(r − m), the same square-root-of-time scaling as the parametric figures.
 * VaR = L_(⌈nα⌉) of the sorted losses; ES = mean of the n − ⌈nα⌉ largest losses (Acerbi & Tasche 2002), the same
 * estimators as server/engine/risk.ts.
 */
import { createRandom } from '../engine/random';

export interface PortfolioSimulationInput {
  /** Wᵀw (factor models) or an empty array (dense models). */
  exposures: ArrayLike<number>;
  /** Σᵢ Ψᵢwᵢ² (factor models) or wᵀΣw (dense models). */
  residualVariance: number;
  meanReturn: number;
  includeMean: boolean;
  draws: number;
  seed: number;
  horizon: number;
  confidenceLevels: readonly number[];
}

export interface PortfolioSimulation {
  draws: number;
  seed: number;
  simulatedVolatility: number;
  levels: { confidence: number; valueAtRisk: number; expectedShortfall: number }[];
}

export function simulatePortfolio(input: PortfolioSimulationInput): PortfolioSimulation {
  const { exposures, draws, horizon } = input;
  if (!(Number.isInteger(draws) && draws >= 1)) throw new Error(`draws must be a positive integer, got ${draws}`);
  for (const c of input.confidenceLevels) {
    if (!(c > 0 && c < 1)) throw new Error(`confidence levels must lie in (0, 1), got ${c}`);
    if (draws - Math.ceil(draws * c - 1e-9) < 1) throw new Error(`${draws} draws are too few for a ${c} tail: raise draws`);
  }
  const l = exposures.length;
  const residualSd = Math.sqrt(Math.max(input.residualVariance, 0));
  const rng = createRandom(input.seed);
  const z = new Float64Array(l);
  const returns = new Float64Array(draws); // r − m, one period
  let sum = 0;
  for (let j = 0; j < draws; j++) {
    rng.fillNormal(z);
    let r = 0;
    for (let k = 0; k < l; k++) r += exposures[k] * z[k];
    r += residualSd * rng.normal();
    returns[j] = r;
    sum += r;
  }
  const mean = sum / draws;
  let ss = 0;
  for (let j = 0; j < draws; j++) ss += (returns[j] - mean) ** 2;
  const rootH = Math.sqrt(horizon);
  const drift = input.includeMean ? input.meanReturn * horizon : 0;
  const losses = new Float64Array(draws);
  for (let j = 0; j < draws; j++) losses[j] = -(drift + rootH * returns[j]);
  losses.sort();
  return {
    draws,
    seed: input.seed,
    simulatedVolatility: draws > 1 ? Math.sqrt(ss / (draws - 1)) : 0,
    levels: input.confidenceLevels.map((c) => {
      const m1 = Math.ceil(draws * c - 1e-9);
      let tail = 0;
      for (let j = m1; j < draws; j++) tail += losses[j];
      return { confidence: c, valueAtRisk: losses[m1 - 1], expectedShortfall: tail / (draws - m1) };
    }),
  };
}
