import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import type { DenseCovarianceModel, FactorModel } from './types';
import { monteCarloRisk, portfolioRisk, portfolioRiskBatch, varianceBreakdown, EXPOSURE_CAVEAT } from './risk';
import { denseCovariance } from './lowRank';
import { NORMAL_QUANTILE_95, NORMAL_QUANTILE_99, normalDensity } from './normalDistribution';
import { plantedPanel } from './planted';

// Reference values written by tests/reference/generate_risk.py (numpy/scipy on the explicit N × N covariance).
const fixture = JSON.parse(readFileSync(new URL('../../tests/reference/fixtures/risk.json', import.meta.url), 'utf8'));

function factorModel(n: number, l: number, loadings: number[], psi: number[], mean?: number[]): FactorModel {
  return {
    kind: 'factor',
    method: 'fa',
    assets: n,
    factors: l,
    mean: Float64Array.from(mean ?? new Array(n).fill(0)),
    loadings: Float64Array.from(loadings),
    specificVariance: Float64Array.from(psi),
  };
}

function asDense(model: FactorModel): DenseCovarianceModel {
  return { kind: 'dense', method: 'sample', assets: model.assets, mean: model.mean, covariance: denseCovariance(model) };
}

const sum = (a: ArrayLike<number>) => Array.from(a).reduce((s, v) => s + v, 0);

describe('portfolio risk, hand-worked two-asset example', () => {
  // W = [0.1; 0.2] (one factor), Ψ = (0.01, 0.04), w = (0.5, 0.5).
  // Σ = WWᵀ + Ψ = [[0.02, 0.02], [0.02, 0.08]]; Wᵀw = 0.15 → factor variance 0.0225;
  // specific variance 0.25·0.01 + 0.25·0.04 = 0.0125; total 0.035 = 0.25·(0.02 + 2·0.02 + 0.08).
  // Σw = (0.02, 0.05); contributions wᵢ(Σw)ᵢ/σ = (0.01, 0.025)/σ; percentages 2/7 and 5/7.
  const model = factorModel(2, 1, [0.1, 0.2], [0.01, 0.04]);
  const risk = portfolioRisk(model, [0.5, 0.5], { periodsPerYear: 252 });

  it('splits variance into factor and specific parts', () => {
    expect(risk.factorVariance).toBeCloseTo(0.0225, 15);
    expect(risk.specificVariance).toBeCloseTo(0.0125, 15);
    expect(risk.variance).toBeCloseTo(0.035, 15);
    expect(risk.volatility).toBeCloseTo(Math.sqrt(0.035), 15);
    expect(risk.annualisedVolatility).toBeCloseTo(Math.sqrt(0.035 * 252), 13);
  });

  it('gives Euler contributions that sum to the total', () => {
    const sigma = Math.sqrt(0.035);
    expect(risk.marginalContributions[0]).toBeCloseTo(0.02 / sigma, 14);
    expect(risk.contributions[1]).toBeCloseTo(0.025 / sigma, 14);
    expect(risk.percentContributions[0]).toBeCloseTo(2 / 7, 14);
    expect(risk.percentContributions[1]).toBeCloseTo(5 / 7, 14);
    expect(sum(risk.contributions)).toBeCloseTo(risk.volatility, 15);
  });

  it('computes normal VaR and ES with exact quantiles', () => {
    const sigma = Math.sqrt(0.035);
    const [p95, p99] = risk.parametric;
    expect(p95.quantile).toBe(NORMAL_QUANTILE_95);
    expect(p99.quantile).toBe(NORMAL_QUANTILE_99);
    expect(p95.valueAtRisk).toBeCloseTo(1.6448536269514722 * sigma, 14);
    // ES_95 = σ φ(1.6449)/0.05 = σ · 2.0627128…
    expect(p95.expectedShortfall).toBeCloseTo(sigma * 2.0627128075074226, 12);
    // 10 periods: square-root-of-time scaling.
    const ten = portfolioRisk(model, [0.5, 0.5], { horizon: 10 });
    expect(ten.parametric[1].valueAtRisk).toBeCloseTo(NORMAL_QUANTILE_99 * sigma * Math.sqrt(10), 13);
    expect(ten.parametric[1].expectedShortfall).toBeCloseTo((sigma * Math.sqrt(10) * normalDensity(NORMAL_QUANTILE_99)) / 0.01, 12);
  });

  it('reports the rotation-invariant exposure summary with a caveat', () => {
    expect(risk.exposure?.exposures[0]).toBeCloseTo(0.15, 15);
    expect(risk.exposure?.exposureNorm).toBeCloseTo(0.15, 15);
    expect(risk.exposure?.factorVarianceShare).toBeCloseTo(0.0225 / 0.035, 14);
    expect(risk.exposure?.caveat).toBe(EXPOSURE_CAVEAT);
    expect(risk.assumptions.join(' ')).toMatch(/normal/);
  });

  it('computes tracking error against a benchmark', () => {
    // Active weights (0.5, −0.5): a'Σa = 0.25·(0.02 − 2·0.02 + 0.08) = 0.015.
    const r = portfolioRisk(model, [1, 0], { benchmark: [0.5, 0.5] });
    expect(r.active?.variance).toBeCloseTo(0.015, 15);
    expect(sum(r.active!.contributions)).toBeCloseTo(Math.sqrt(0.015), 15);
  });

  it('includes the mean only when asked', () => {
    const withMean = factorModel(2, 1, [0.1, 0.2], [0.01, 0.04], [0.001, 0.003]);
    const zero = portfolioRisk(withMean, [0.5, 0.5]);
    const drift = portfolioRisk(withMean, [0.5, 0.5], { includeMean: true, horizon: 4 });
    expect(zero.parametric[0].valueAtRisk).toBeCloseTo(NORMAL_QUANTILE_95 * Math.sqrt(0.035), 14);
    expect(drift.parametric[0].valueAtRisk).toBeCloseTo(NORMAL_QUANTILE_95 * Math.sqrt(0.035) * 2 - 0.002 * 4, 14);
  });

  it('rejects weights of the wrong length or non-finite', () => {
    expect(() => portfolioRisk(model, [1])).toThrow(/expected 2 entries/);
    expect(() => portfolioRisk(model, [1, NaN])).toThrow(/entry 1/);
    expect(() => portfolioRisk(model, [1, 0], { horizon: 0 })).toThrow(/horizon/);
  });
});

describe('factor-model risk equals dense risk on W Wᵀ + Ψ formed explicitly', () => {
  const planted = plantedPanel({ assets: 40, observations: 5, factors: 4, seed: 11 });
  const model = factorModel(40, 4, Array.from(planted.loadings), Array.from(planted.specificVariance));
  const dense = asDense(model);
  const w = Array.from({ length: 40 }, (_, i) => ((i % 7) - 2) / 40);
  const b = new Array(40).fill(1 / 40);
  it('matches variance, contributions and tracking error to 1e-12 relative', () => {
    const f = portfolioRisk(model, w, { benchmark: b });
    const d = portfolioRisk(dense, w, { benchmark: b });
    expect(Math.abs(f.variance - d.variance) / d.variance).toBeLessThan(1e-12);
    for (let i = 0; i < 40; i++) expect(Math.abs(f.contributions[i] - d.contributions[i])).toBeLessThan(1e-12 * d.volatility);
    expect(Math.abs(f.active!.volatility - d.active!.volatility)).toBeLessThan(1e-12 * d.active!.volatility);
    expect(d.factorVariance).toBeNull();
    expect(d.exposure).toBeNull();
    expect(Math.abs(sum(d.contributions) - d.volatility)).toBeLessThan(1e-14);
  });
});

describe('portfolio risk against the numpy reference (tests/reference/generate_risk.py)', () => {
  for (const c of fixture.factorCases) {
    it(`factor model N=${c.assets}, L=${c.factors}`, () => {
      const model = factorModel(c.assets, c.factors, c.loadings, c.specificVariance, c.mean);
      const results = portfolioRiskBatch(model, c.portfolios, { periodsPerYear: c.periodsPerYear, horizon: c.horizon, benchmark: c.benchmark });
      results.forEach((r, p) => {
        const ref = c.risk[p];
        expect(r.volatility).toBeCloseTo(ref.volatility, 14);
        expect(Math.abs(r.annualisedVolatility - ref.annualisedVolatility) / ref.annualisedVolatility).toBeLessThan(1e-12);
        expect(Math.abs(r.factorVariance! - c.factorVariance[p]) / c.factorVariance[p]).toBeLessThan(1e-12);
        expect(Math.abs(r.specificVariance! - c.specificVarianceOfPortfolio[p]) / c.specificVarianceOfPortfolio[p]).toBeLessThan(1e-12);
        for (let i = 0; i < c.assets; i++) {
          expect(Math.abs(r.contributions[i] - ref.contributions[i])).toBeLessThan(1e-12 * ref.volatility);
          expect(Math.abs(r.percentContributions[i] - ref.percentContributions[i])).toBeLessThan(1e-11);
          expect(Math.abs(r.marginalContributions[i] - ref.marginalContributions[i])).toBeLessThan(1e-12 * Math.abs(ref.marginalContributions[i]) + 1e-15);
        }
        expect(Math.abs(r.active!.volatility - ref.trackingError)).toBeLessThan(1e-12 * Math.max(ref.volatility, 1e-3));
        r.parametric.forEach((t, k) => {
          expect(Math.abs(t.quantile - ref.parametric[k].quantile)).toBeLessThan(1e-15);
          expect(Math.abs(t.valueAtRisk - ref.parametric[k].valueAtRisk) / ref.parametric[k].valueAtRisk).toBeLessThan(1e-12);
          expect(Math.abs(t.expectedShortfall - ref.parametric[k].expectedShortfall) / ref.parametric[k].expectedShortfall).toBeLessThan(1e-12);
        });
      });
    });
  }
  it('dense covariance model', () => {
    const c = fixture.denseCase;
    const model: DenseCovarianceModel = { kind: 'dense', method: 'ledoit-wolf', assets: c.assets, mean: Float64Array.from(c.mean), covariance: Float64Array.from(c.covariance) };
    const r = portfolioRisk(model, c.portfolios[0], { benchmark: c.benchmark });
    const ref = c.risk[0];
    expect(Math.abs(r.volatility - ref.volatility) / ref.volatility).toBeLessThan(1e-13);
    for (let i = 0; i < c.assets; i++) expect(Math.abs(r.contributions[i] - ref.contributions[i])).toBeLessThan(1e-13 * ref.volatility);
    expect(Math.abs(r.active!.volatility - ref.trackingError) / ref.trackingError).toBeLessThan(1e-12);
  });
});

describe('zero portfolio', () => {
  it('has zero risk and zero (not NaN) contributions', () => {
    const r = varianceBreakdown(factorModel(2, 1, [0.1, 0.2], [0.01, 0.04]), [0, 0]);
    expect(r.volatility).toBe(0);
    expect(Array.from(r.contributions)).toEqual([0, 0]);
  });
});

describe('Monte Carlo VaR/ES from the generative model', () => {
  const planted = plantedPanel({ assets: 25, observations: 2, factors: 3, seed: 5 });
  const model = factorModel(25, 3, Array.from(planted.loadings), Array.from(planted.specificVariance), new Array(25).fill(0.0004));
  const w = new Array(25).fill(1 / 25);
  const long = w.map((v, i) => (i < 12 ? 2 * v : 0));

  it('is reproducible for a seed and differs across seeds', () => {
    const a = monteCarloRisk(model, [w], { seed: 1, draws: 2000 });
    const b = monteCarloRisk(model, [w], { seed: 1, draws: 2000 });
    const c = monteCarloRisk(model, [w], { seed: 2, draws: 2000 });
    expect(a).toEqual(b);
    expect(c[0].levels[0].valueAtRisk).not.toBe(a[0].levels[0].valueAtRisk);
  });

  it.each(['portfolio', 'panel'] as const)('agrees with the parametric figures within sampling error (%s draws)', (method) => {
    const draws = 40_000;
    const [mc, mc2] = monteCarloRisk(model, [w, long], { seed: 7, draws, horizon: 5, method });
    for (const [mcResult, weights] of [[mc, w], [mc2, long]] as const) {
      const ref = portfolioRisk(model, weights, { horizon: 5 });
      // The s.d. of the simulated returns: relative standard error ≈ 1/√(2n) ≈ 0.0035; allow 4 SE.
      expect(Math.abs(mcResult.simulatedVolatility / ref.volatility - 1)).toBeLessThan(4 / Math.sqrt(2 * draws));
      // Empirical normal quantiles at 95 %/99 %: relative SE = √(α(1−α)/n)/(φ(z) z) ≈ 0.6 % and 1.2 %: allow 4 SE.
      mcResult.levels.forEach((level, k) => {
        const alpha = level.confidence;
        const z = ref.parametric[k].quantile;
        const se = Math.sqrt((alpha * (1 - alpha)) / draws) / (normalDensity(z) * z);
        expect(Math.abs(level.valueAtRisk / ref.parametric[k].valueAtRisk - 1)).toBeLessThan(4 * se);
        expect(Math.abs(level.expectedShortfall / ref.parametric[k].expectedShortfall - 1)).toBeLessThan(6 * se);
        expect(level.expectedShortfall).toBeGreaterThan(level.valueAtRisk);
      });
    }
  });

  it('samples dense models too', () => {
    const draws = 40_000;
    const [mc] = monteCarloRisk(asDense(model), [w], { seed: 3, draws });
    const ref = portfolioRisk(model, w);
    expect(Math.abs(mc.simulatedVolatility / ref.volatility - 1)).toBeLessThan(4 / Math.sqrt(2 * draws));
  });

  it('refuses too few draws for a tail', () => {
    expect(() => monteCarloRisk(model, [w], { seed: 1, draws: 50, confidenceLevels: [0.99] })).toThrow(/too few/);
  });
});
