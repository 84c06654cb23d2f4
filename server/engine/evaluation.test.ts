import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import type { DenseCovarianceModel, FactorModel } from './types';
import { biasStatistic, rollingBiasStatistic, evaluateForecasts, kupiecTest, minimumVarianceWeights, qlikeLoss, rollingWindows } from './evaluation';
import { denseCovariance } from './lowRank';
import { portfolioRisk } from './risk';
import { plantedPanel } from './planted';
import { NORMAL_QUANTILE_95 } from './normalDistribution';

// Reference values written by tests/reference/generate_risk.py (numpy/scipy).
const fixture = JSON.parse(readFileSync(new URL('../../tests/reference/fixtures/risk.json', import.meta.url), 'utf8'));

describe('bias statistic', () => {
  it('matches a hand-worked example', () => {
    // Outcomes (1, −1, 1, −1) with forecasts 1: mean 0, Σb² = 4, s.d. √(4/3); band 1 ± √(2/4) = 1 ± 0.7071.
    const b = biasStatistic([1, -1, 1, -1], [1, 1, 1, 1]);
    expect(b.value).toBeCloseTo(Math.sqrt(4 / 3), 15);
    expect(b.lower).toBeCloseTo(1 - Math.SQRT1_2, 15);
    expect(b.upper).toBeCloseTo(1 + Math.SQRT1_2, 15);
    expect(b.withinBand).toBe(true);
    expect(() => biasStatistic([1, 2], [1, 0])).toThrow(/period 1/);
  });
  it('rolls over windows', () => {
    // Window 2 over outcomes (1, −1, 3): s.d. of (1, −1) = √2, of (−1, 3) = √8; the first entry has no full window.
    const rolling = rollingBiasStatistic([1, -1, 3], [1, 1, 1], 2);
    expect(rolling[0]).toBeNaN();
    expect(rolling[1]).toBeCloseTo(Math.SQRT2, 15);
    expect(rolling[2]).toBeCloseTo(Math.sqrt(8), 15);
  });
  it('matches numpy', () => {
    const e = fixture.evaluation;
    expect(Math.abs(biasStatistic(e.realisedReturns, e.forecastVolatility).value - e.bias)).toBeLessThan(1e-13);
  });
});

describe('QLIKE (Patton 2011)', () => {
  it('is zero for a perfect forecast in normalised form (hand-worked)', () => {
    // h = 1, proxy 1: 1 − ln 1 − 1 = 0; ranking form ln 1 + 1 = 1. h = 2, proxy 1: 0.5 − ln 0.5 − 1 = 0.19315.
    const q = qlikeLoss([1, 2], [1, 1]);
    expect(q.meanNormalised).toBeCloseTo((0 + (0.5 + Math.log(2) - 1)) / 2, 15);
    expect(q.mean).toBeCloseTo((1 + Math.log(2) + 0.5) / 2, 15);
    expect(qlikeLoss([1], [0]).meanNormalised).toBeNull();
  });
  it('matches numpy', () => {
    const e = fixture.evaluation;
    const h = e.forecastVolatility.map((s: number) => s * s);
    const p = e.realisedReturns.map((r: number) => r * r);
    const q = qlikeLoss(h, p);
    expect(Math.abs(q.mean - e.qlikeMean)).toBeLessThan(1e-12 * Math.abs(e.qlikeMean));
    expect(Math.abs(q.meanNormalised! - e.qlikeNormalised)).toBeLessThan(1e-12);
  });
});

describe('Kupiec (1995) proportion-of-failures test', () => {
  it('is 0 with p-value 1 when the exceedance rate equals the expected one (hand-worked)', () => {
    // 1 exceedance in 100 at 99 %: x/T = p, so both likelihoods coincide.
    const k = kupiecTest(1, 100, 0.99);
    expect(k.statistic).toBeCloseTo(0, 14);
    expect(k.pValue).toBeCloseTo(1, 12);
  });
  it('matches a hand-worked zero-exceedance case', () => {
    // x = 0, T = 250, p = 0.01: LR = −2·250·ln 0.99 = 5.025167926750…, P(χ²₁ > LR) = 0.02498…
    const k = kupiecTest(0, 250, 0.99);
    expect(k.statistic).toBeCloseTo(-500 * Math.log(0.99), 13);
    expect(k.rejectedAt5Percent).toBe(true);
  });
  for (const c of fixture.kupiec) {
    it(`matches scipy for ${c.exceedances} of ${c.observations} at ${c.confidence}`, () => {
      const k = kupiecTest(c.exceedances, c.observations, c.confidence);
      expect(Math.abs(k.statistic - c.statistic)).toBeLessThan(1e-10 * Math.max(1, c.statistic));
      expect(Math.abs(k.pValue - c.pValue)).toBeLessThan(1e-12 + 1e-10 * c.pValue);
    });
  }
  it('rejects impossible counts', () => {
    expect(() => kupiecTest(5, 4, 0.99)).toThrow(/exceedances/);
    expect(() => kupiecTest(1, 4, 1)).toThrow(/confidence/);
  });
});

describe('minimum-variance weights w ∝ Σ⁻¹1', () => {
  it('matches a hand-worked two-asset case', () => {
    // Σ = [[0.02, 0.02], [0.02, 0.08]]: w₁ = (σ₂² − σ₁₂)/(σ₁² + σ₂² − 2σ₁₂) = 0.06/0.06 = 1, w₂ = 0.
    const m: FactorModel = { kind: 'factor', method: 'fa', assets: 2, factors: 1, mean: new Float64Array(2), loadings: Float64Array.from([0.1, 0.2]), specificVariance: Float64Array.from([0.01, 0.04]) };
    const w = minimumVarianceWeights(m);
    expect(w[0]).toBeCloseTo(1, 14);
    expect(w[1]).toBeCloseTo(0, 14);
  });
  for (const c of fixture.factorCases) {
    it(`matches numpy.linalg.solve for a factor model N=${c.assets} (Woodbury)`, () => {
      const m: FactorModel = { kind: 'factor', method: 'fa', assets: c.assets, factors: c.factors, mean: new Float64Array(c.assets), loadings: Float64Array.from(c.loadings), specificVariance: Float64Array.from(c.specificVariance) };
      const w = minimumVarianceWeights(m);
      for (let i = 0; i < c.assets; i++) expect(Math.abs(w[i] - c.minimumVarianceWeights[i])).toBeLessThan(1e-11);
    });
  }
  it('matches numpy for a dense model (Cholesky) and agrees with Woodbury on an explicit W Wᵀ + Ψ', () => {
    const c = fixture.denseCase;
    const dense: DenseCovarianceModel = { kind: 'dense', method: 'ledoit-wolf', assets: c.assets, mean: new Float64Array(c.assets), covariance: Float64Array.from(c.covariance) };
    const w = minimumVarianceWeights(dense);
    for (let i = 0; i < c.assets; i++) expect(Math.abs(w[i] - c.minimumVarianceWeights[i])).toBeLessThan(1e-11);
    const planted = plantedPanel({ assets: 30, observations: 2, factors: 3, seed: 8 });
    const f: FactorModel = { kind: 'factor', method: 'fa', assets: 30, factors: 3, mean: new Float64Array(30), loadings: planted.loadings, specificVariance: planted.specificVariance };
    const viaWoodbury = minimumVarianceWeights(f);
    const viaCholesky = minimumVarianceWeights({ kind: 'dense', method: 'sample', assets: 30, mean: new Float64Array(30), covariance: denseCovariance(f) });
    for (let i = 0; i < 30; i++) expect(Math.abs(viaWoodbury[i] - viaCholesky[i])).toBeLessThan(1e-12);
    // The minimum-variance portfolio's marginal risks are all equal (first-order condition Σw = λ1).
    const r = portfolioRisk(f, viaWoodbury);
    for (let i = 1; i < 30; i++) expect(Math.abs(r.marginalContributions[i] - r.marginalContributions[0])).toBeLessThan(1e-12);
  });
  it('reports a singular dense covariance', () => {
    const singular: DenseCovarianceModel = { kind: 'dense', method: 'sample', assets: 2, mean: new Float64Array(2), covariance: Float64Array.from([1, 1, 1, 1]) };
    expect(() => minimumVarianceWeights(singular)).toThrow(/not positive definite/);
  });
});

describe('rolling-window backtest helpers', () => {
  it('lists rolling and expanding windows', () => {
    expect(rollingWindows(6, 3)).toEqual([{ start: 0, end: 3 }, { start: 1, end: 4 }, { start: 2, end: 5 }]);
    expect(rollingWindows(7, 3, 2, true)).toEqual([{ start: 0, end: 3 }, { start: 0, end: 5 }]);
  });
  it('evaluates forecasts: bias, QLIKE and VaR exceedances with Kupiec', () => {
    // Forecast σ = 1 every period; returns −2 (an exceedance at 95 %: 2 > 1.645) once in 4 periods.
    const e = evaluateForecasts({ realisedReturns: [0.5, -2, 1, -0.5], forecastVolatility: [1, 1, 1, 1], confidenceLevels: [0.95] });
    expect(e.valueAtRisk[0].exceedances).toBe(1);
    expect(e.valueAtRisk[0].statistic).toBeCloseTo(kupiecTest(1, 4, 0.95).statistic, 15);
    expect(e.bias.observations).toBe(4);
    expect(e.qlike.mean).toBeCloseTo((0.25 + 4 + 1 + 0.25) / 4, 15);
    // Explicit VaR forecasts override z·σ.
    const given = evaluateForecasts({ realisedReturns: [-1.7, -1.5], forecastVolatility: [1, 1], confidenceLevels: [0.95], valueAtRisk: { 0.95: [1.8, 1.4] } });
    expect(given.valueAtRisk[0].exceedances).toBe(1);
    expect(NORMAL_QUANTILE_95).toBeLessThan(1.7);
  });
});
