import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import type { FactorModel } from './types';
import { factorScores } from './scores';
import { sampleReturns } from './sampling';
import { plantedPanel } from './planted';

// Reference values written by tests/reference/generate_risk.py (numpy closed form on the observed assets of each date).
const fixture = JSON.parse(readFileSync(new URL('../../tests/reference/fixtures/risk.json', import.meta.url), 'utf8'));

function model(n: number, l: number, loadings: ArrayLike<number>, psi: ArrayLike<number>, mean?: ArrayLike<number>): FactorModel {
  return {
    kind: 'factor', method: 'fa', assets: n, factors: l,
    mean: mean ? Float64Array.from(mean) : new Float64Array(n),
    loadings: Float64Array.from(loadings), specificVariance: Float64Array.from(psi),
  };
}

describe('factor scores E[z|x] = (I + WᵀΨ⁻¹W)⁻¹WᵀΨ⁻¹(x − μ) (Tipping & Bishop 1999, eqs. 6–7)', () => {
  it('matches a hand-worked one-factor example, with and without a missing entry', () => {
    // W = (1, 1)ᵀ, Ψ = (1, 1), μ = 0. x = (1, 3): M = 1 + 1 + 1 = 3, WᵀΨ⁻¹x = 4 → E[z|x] = 4/3, Cov = 1/3.
    // x = (1, NaN): M = 1 + 1 = 2, WᵀΨ⁻¹x = 1 → E[z|x] = 1/2, Cov = 1/2. x = (NaN, NaN): prior, 0 and 1.
    const m = model(2, 1, [1, 1], [1, 1]);
    const s = factorScores(m, { values: Float64Array.from([1, 3, 1, NaN, NaN, NaN]), observations: 3, assets: 2 });
    expect(s.scores[0]).toBeCloseTo(4 / 3, 15);
    expect(s.posteriorCovariances[0]).toBeCloseTo(1 / 3, 15);
    expect(s.scores[1]).toBeCloseTo(0.5, 15);
    expect(s.posteriorCovariances[1]).toBeCloseTo(0.5, 15);
    expect(s.scores[2]).toBe(0);
    expect(s.posteriorCovariances[2]).toBe(1);
    expect(Array.from(s.observedCounts)).toEqual([2, 1, 0]);
    expect(s.emptyRows).toEqual([2]);
  });

  it('matches the numpy reference with missing entries per row', () => {
    const c = fixture.scores;
    const m = model(c.assets, c.factors, c.loadings, c.specificVariance, c.mean);
    const values = Float64Array.from(c.values.map((v: number | null) => (v === null ? NaN : v)));
    const s = factorScores(m, { values, observations: c.observations, assets: c.assets });
    const l = c.factors;
    for (let t = 0; t < c.observations; t++) {
      for (let k = 0; k < l; k++) {
        const ref = c.scores[t][k];
        expect(Math.abs(s.scores[t * l + k] - ref)).toBeLessThan(1e-12 * Math.max(1, Math.abs(ref)));
      }
      for (let j = 0; j < l * l; j++) {
        const ref = c.posteriorCovariances[t][j];
        expect(Math.abs(s.posteriorCovariances[t * l * l + j] - ref)).toBeLessThan(1e-12);
      }
    }
  });

  it('recovers the planted factor returns when specific noise is small relative to the factors', () => {
    const planted = plantedPanel({ assets: 200, observations: 50, factors: 2, seed: 21 });
    const m = model(200, 2, planted.loadings, planted.specificVariance, planted.mean);
    const s = factorScores(m, planted.complete);
    // With N = 200 assets the posterior variance of each factor is small; correlation with the truth is near 1.
    for (let k = 0; k < 2; k++) {
      const a: number[] = [];
      const b: number[] = [];
      for (let t = 0; t < 50; t++) {
        a.push(s.scores[t * 2 + k]);
        b.push(planted.factorReturns[t * 2 + k]);
      }
      expect(correlation(a, b)).toBeGreaterThan(0.95);
    }
  });

  it('gives the same scores whether missing rows are built by subtraction or from the observed assets', () => {
    // Row 0 misses 1 of 6 assets (subtraction path), row 1 misses 5 of 6 (observed-rows path); compare with a
    // model restricted to the observed assets.
    const full = model(6, 2, [0.5, 0.1, 0.4, -0.2, 0.3, 0.3, 0.6, 0, 0.2, 0.5, 0.45, -0.1], [0.2, 0.3, 0.25, 0.4, 0.35, 0.3]);
    const x = sampleReturns(full, { observations: 2, seed: 9 }).values;
    x[3] = NaN;
    for (const j of [6, 7, 8, 10, 11]) x[j] = NaN;
    const s = factorScores(full, { values: x, observations: 2, assets: 6 });
    const keep0 = [0, 1, 2, 4, 5];
    const sub0 = restrict(full, keep0);
    const r0 = factorScores(sub0, { values: Float64Array.from(keep0.map((i) => x[i])), observations: 1, assets: 5 });
    const sub1 = restrict(full, [3]);
    const r1 = factorScores(sub1, { values: Float64Array.from([x[9]]), observations: 1, assets: 1 });
    for (let k = 0; k < 2; k++) {
      expect(Math.abs(s.scores[k] - r0.scores[k])).toBeLessThan(1e-13);
      expect(Math.abs(s.scores[2 + k] - r1.scores[k])).toBeLessThan(1e-13);
    }
  });

  it('rejects a panel of the wrong width and non-positive specific variances', () => {
    const m = model(2, 1, [1, 1], [1, 1]);
    expect(() => factorScores(m, { values: new Float64Array(3), observations: 1, assets: 3 })).toThrow(/3 assets/);
    expect(() => factorScores(model(2, 1, [1, 1], [1, 0]), { values: new Float64Array(2), observations: 1, assets: 2 })).toThrow(/positive/);
  });
});

function restrict(m: FactorModel, keep: number[]): FactorModel {
  const l = m.factors;
  const loadings = new Float64Array(keep.length * l);
  keep.forEach((i, r) => {
    for (let k = 0; k < l; k++) loadings[r * l + k] = m.loadings[i * l + k];
  });
  return model(keep.length, l, loadings, keep.map((i) => m.specificVariance[i]), keep.map((i) => m.mean[i]));
}

function correlation(a: number[], b: number[]): number {
  const n = a.length;
  const ma = a.reduce((s, v) => s + v, 0) / n;
  const mb = b.reduce((s, v) => s + v, 0) / n;
  let sab = 0;
  let saa = 0;
  let sbb = 0;
  for (let i = 0; i < n; i++) {
    sab += (a[i] - ma) * (b[i] - mb);
    saa += (a[i] - ma) ** 2;
    sbb += (b[i] - mb) ** 2;
  }
  return sab / Math.sqrt(saa * sbb);
}
