/**
 * Monte Carlo VaR/ES of ONE portfolio from a fitted model's generative form, simulated in the portfolio's own
 * low dimension. Pure, no I/O.
 *
 * Factor model x = μ + W z + ε, z ~ N(0, I_L), ε ~ N(0, diag Ψ) (Tipping & Bishop 1999, eq. (2)): the portfolio
 * return is r = wᵀx = wᵀμ + (Wᵀw)ᵀ z + wᵀε with wᵀε ~ N(0, Σᵢ Ψᵢwᵢ²) independent of z. Drawing z (L normals) and
 * one normal for the specific part gives r exactly in distribution, at O(L) per draw instead of O(N·L) for a full
 * return vector (the engine's monteCarloRisk draws whole vectors, for many portfolios on the same draws).
 * Dense model x ~ N(μ, Σ): r ~ N(wᵀμ, wᵀΣw), one normal per draw.
 * The standard normals depend only on (seed, draws, L), not on the portfolio, so they are drawn once and reused
 * (common random numbers: every portfolio and every what-if on a model sees the same draws, so differences between
 * them are not sampling noise).
 * h periods: h·m + √h·(r − m), the same square-root-of-time scaling as the parametric figures.
 * VaR = L_(⌈nα⌉), the ⌈nα⌉-th smallest loss; ES = mean of the n − ⌈nα⌉ largest losses (Acerbi & Tasche 2002), the
 * same estimators as server/engine/risk.ts (found by selection, O(n), instead of a full sort).
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

/** draws × (L + 1) standard normals, row j = (z_j1 … z_jL, e_j), cached by (seed, draws, L). */
const normalCache = new Map<string, Float64Array>();
const MAX_CACHED_DOUBLES = 8_000_000; // 64 MB

function standardNormals(seed: number, draws: number, factors: number): Float64Array {
  const key = `${seed}:${draws}:${factors}`;
  const hit = normalCache.get(key);
  if (hit) {
    normalCache.delete(key);
    normalCache.set(key, hit);
    return hit;
  }
  const width = factors + 1;
  const rng = createRandom(seed);
  const out = new Float64Array(draws * width);
  const z = new Float64Array(factors);
  for (let j = 0; j < draws; j++) {
    rng.fillNormal(z);
    out.set(z, j * width);
    out[j * width + factors] = rng.normal();
  }
  normalCache.set(key, out);
  let total = 0;
  for (const v of normalCache.values()) total += v.length;
  for (const [k, v] of normalCache) {
    if (total <= MAX_CACHED_DOUBLES || k === key) break;
    normalCache.delete(k);
    total -= v.length;
  }
  return out;
}

/** Rearranges a[lo..hi] so that a[k] is the value it would hold sorted, smaller ones before, larger after (Hoare 1961). */
function select(a: Float64Array, k: number, lo = 0, hi = a.length - 1): void {
  while (hi > lo) {
    const pivot = a[(lo + hi) >> 1];
    let i = lo;
    let j = hi;
    while (i <= j) {
      while (a[i] < pivot) i++;
      while (a[j] > pivot) j--;
      if (i <= j) {
        const t = a[i];
        a[i] = a[j];
        a[j] = t;
        i++;
        j--;
      }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else return;
  }
}

export function simulatePortfolio(input: PortfolioSimulationInput): PortfolioSimulation {
  const { exposures, draws, horizon } = input;
  if (!(Number.isInteger(draws) && draws >= 1)) throw new Error(`draws must be a positive integer, got ${draws}`);
  for (const c of input.confidenceLevels) {
    if (!(c > 0 && c < 1)) throw new Error(`confidence levels must lie in (0, 1), got ${c}`);
    if (draws - Math.ceil(draws * c - 1e-9) < 1) throw new Error(`${draws} draws are too few for a ${c} tail: raise draws`);
  }
  const l = exposures.length;
  const width = l + 1;
  const residualSd = Math.sqrt(Math.max(input.residualVariance, 0));
  const normals = standardNormals(input.seed, draws, l);
  const rootH = Math.sqrt(horizon);
  const drift = input.includeMean ? input.meanReturn * horizon : 0;
  const losses = new Float64Array(draws);
  let sum = 0;
  let sumSquares = 0;
  for (let j = 0; j < draws; j++) {
    const base = j * width;
    let r = residualSd * normals[base + l];
    for (let k = 0; k < l; k++) r += exposures[k] * normals[base + k];
    sum += r;
    sumSquares += r * r;
    losses[j] = -(drift + rootH * r);
  }
  const mean = sum / draws;
  const variance = draws > 1 ? Math.max(sumSquares - draws * mean * mean, 0) / (draws - 1) : 0;
  // Highest level first: each selection leaves larger losses above its index, so later ones work on a prefix.
  const levels = [...input.confidenceLevels].map((c) => ({ c, m1: Math.ceil(draws * c - 1e-9) }));
  const results = new Map<number, { valueAtRisk: number; expectedShortfall: number }>();
  let hi = draws - 1;
  for (const { c, m1 } of [...levels].sort((a, b) => b.m1 - a.m1)) {
    select(losses, m1 - 1, 0, hi);
    let tail = 0;
    for (let j = m1; j < draws; j++) tail += losses[j];
    results.set(c, { valueAtRisk: losses[m1 - 1], expectedShortfall: tail / (draws - m1) });
    hi = m1 - 1;
  }
  return {
    draws,
    seed: input.seed,
    simulatedVolatility: Math.sqrt(variance),
    levels: levels.map(({ c }) => ({ confidence: c, ...results.get(c)! })),
  };
}
