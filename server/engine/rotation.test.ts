import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import type { FactorModel } from './types';
import {
  checkRotationInvariance,
  communalities,
  impliedCorrelation,
  impliedCorrelationMatrix,
  impliedCorrelations,
  loadingSubspaceAngles,
  principalAngles,
  specificShares,
  varimax,
  varimaxCriterion,
} from './rotation';
import { multiply as multiplyMatrices } from './linalg/dense';

/** (m × k)(k × n) product, arguments in reading order. */
const multiply = (a: Float64Array, b: Float64Array, m: number, k: number, n: number) => multiplyMatrices(a, m, k, b, n);
import { plantedPanel } from './planted';
import { createRandom } from './random';
import { portfolioRisk } from './risk';

// Reference values written by tests/reference/generate_risk.py (scipy.linalg.subspace_angles, scikit-learn and R varimax).
const fixture = JSON.parse(readFileSync(new URL('../../tests/reference/fixtures/risk.json', import.meta.url), 'utf8'));

function model(n: number, l: number, loadings: ArrayLike<number>, psi: ArrayLike<number>): FactorModel {
  return { kind: 'factor', method: 'fa', assets: n, factors: l, mean: new Float64Array(n), loadings: Float64Array.from(loadings), specificVariance: Float64Array.from(psi) };
}

/** A random orthogonal L × L matrix as a product of Givens rotations with seeded angles, with one reflection. */
function randomOrthogonal(l: number, seed: number): Float64Array {
  const rng = createRandom(seed);
  let r: Float64Array = new Float64Array(l * l);
  for (let k = 0; k < l; k++) r[k * l + k] = 1;
  for (let p = 0; p < l; p++) {
    for (let q = p + 1; q < l; q++) {
      const theta = 2 * Math.PI * rng.uniform();
      const g = new Float64Array(l * l);
      for (let k = 0; k < l; k++) g[k * l + k] = 1;
      g[p * l + p] = Math.cos(theta);
      g[q * l + q] = Math.cos(theta);
      g[p * l + q] = -Math.sin(theta);
      g[q * l + p] = Math.sin(theta);
      r = multiply(r, g, l, l, l);
    }
  }
  for (let k = 0; k < l; k++) r[k * l] = -r[k * l]; // a reflection is orthogonal too
  return r;
}

describe('communalities, specific shares and implied correlations (hand-worked)', () => {
  // W = [[0.3, 0.4], [0.6, 0]], Ψ = (0.75, 0.64): h = (0.09 + 0.16, 0.36) = (0.25, 0.36);
  // Σ₁₁ = 1, Σ₂₂ = 1, Σ₁₂ = 0.3·0.6 = 0.18; specific shares 0.75 and 0.64.
  const m = model(2, 2, [0.3, 0.4, 0.6, 0], [0.75, 0.64]);
  it('computes them', () => {
    expect(communalities(m)[0]).toBeCloseTo(0.25, 15);
    expect(communalities(m)[1]).toBeCloseTo(0.36, 15);
    expect(specificShares(m)[0]).toBeCloseTo(0.75, 15);
    expect(specificShares(m)[1]).toBeCloseTo(0.64, 15);
    expect(impliedCorrelation(m, 0, 1)).toBeCloseTo(0.18, 15);
    expect(Array.from(impliedCorrelations(m, [[1, 0], [0, 0]]))).toEqual([impliedCorrelation(m, 1, 0), 1]);
    const full = impliedCorrelationMatrix(m);
    expect(full[1]).toBeCloseTo(0.18, 15);
    expect(full[3]).toBe(1);
    expect(() => impliedCorrelation(m, 0, 2)).toThrow(/out of range/);
    expect(() => impliedCorrelationMatrix(m, 1)).toThrow(/limit/);
  });
});

describe('rotation invariance (W → W R)', () => {
  const planted = plantedPanel({ assets: 60, observations: 2, factors: 5, seed: 3 });
  const base = model(60, 5, planted.loadings, planted.specificVariance);
  const r = randomOrthogonal(5, 17);
  const rotated = model(60, 5, multiply(base.loadings, r, 60, 5, 5), base.specificVariance);

  it('leaves W Wᵀ unchanged to 1e-12', () => {
    const check = checkRotationInvariance(base.loadings, 60, 5, r);
    expect(check.orthogonalityError).toBeLessThan(1e-14);
    expect(check.relativeDifference).toBeLessThan(1e-12);
    expect(check.invariant).toBe(true);
  });

  it('flags a non-orthogonal R', () => {
    const bad = r.slice();
    bad[0] *= 1.01;
    expect(checkRotationInvariance(base.loadings, 60, 5, bad).invariant).toBe(false);
  });

  it('leaves communalities, shares, correlations and portfolio risk unchanged to 1e-12', () => {
    const h0 = communalities(base);
    const h1 = communalities(rotated);
    for (let i = 0; i < 60; i++) expect(Math.abs(h0[i] - h1[i])).toBeLessThan(1e-12 * h0[i]);
    const s0 = specificShares(base);
    const s1 = specificShares(rotated);
    for (let i = 0; i < 60; i++) expect(Math.abs(s0[i] - s1[i])).toBeLessThan(1e-12);
    const c0 = impliedCorrelationMatrix(base);
    const c1 = impliedCorrelationMatrix(rotated);
    for (let j = 0; j < c0.length; j++) expect(Math.abs(c0[j] - c1[j])).toBeLessThan(1e-12);
    const w = Array.from({ length: 60 }, (_, i) => Math.sin(i + 1) / 60);
    const a = portfolioRisk(base, w);
    const b = portfolioRisk(rotated, w);
    expect(Math.abs(a.variance - b.variance) / a.variance).toBeLessThan(1e-12);
    expect(Math.abs(a.exposure!.exposureNorm - b.exposure!.exposureNorm) / a.exposure!.exposureNorm).toBeLessThan(1e-12);
    expect(Math.abs(a.exposure!.factorVarianceShare - b.exposure!.factorVarianceShare)).toBeLessThan(1e-12);
  });

  it('gives zero principal angles between a subspace and its rotation', () => {
    const angles = loadingSubspaceAngles(base, rotated);
    expect(angles.length).toBe(5);
    for (const a of angles) expect(a).toBeLessThan(1e-12);
  });
});

describe('principal angles (Björck & Golub 1973), hand-worked', () => {
  it('is π/2 between orthogonal subspaces', () => {
    // span(e1) vs span(e2) in R³.
    const angles = principalAngles(Float64Array.from([1, 0, 0]), Float64Array.from([0, 1, 0]), 3, 1, 1);
    expect(angles[0]).toBeCloseTo(Math.PI / 2, 15);
  });
  it('is π/2 twice between span(e1, e2) and span(e3, e4) in R⁴', () => {
    const a = Float64Array.from([1, 0, 0, 1, 0, 0, 0, 0]);
    const b = Float64Array.from([0, 0, 0, 0, 1, 0, 0, 1]);
    const angles = principalAngles(a, b, 4, 2, 2);
    expect(Array.from(angles)).toEqual([Math.PI / 2, Math.PI / 2]);
  });
  it('is 0 and π/4 for span(e1, e2) vs span(e1, (e2 + e3)/√2)', () => {
    // The shared direction e1 gives 0; e2 and (e2 + e3)/√2 meet at 45°.
    const a = Float64Array.from([1, 0, 0, 1, 0, 0]); // 3 × 2 row-major: columns e1, e2
    const b = Float64Array.from([2, 0, 0, 1, 0, 1]); // columns 2e1, e2 + e3 (scaling does not matter)
    const angles = principalAngles(a, b, 3, 2, 2);
    expect(angles[0]).toBeLessThan(1e-15);
    expect(angles[1]).toBeCloseTo(Math.PI / 4, 15);
  });
  it('handles rank-deficient input by dropping dependent columns', () => {
    const a = Float64Array.from([1, 2, 0, 0, 0, 0]); // columns e1 and 2e1: rank 1
    const b = Float64Array.from([0, 1, 0]);
    expect(principalAngles(a, b, 3, 2, 1).length).toBe(1);
  });
  for (const c of fixture.principalAngles) {
    it(`matches scipy.linalg.subspace_angles for n=${c.n}, ${c.la} vs ${c.lb} columns`, () => {
      const angles = principalAngles(Float64Array.from(c.a), Float64Array.from(c.b), c.n, c.la, c.lb);
      expect(angles.length).toBe(c.angles.length);
      // scipy 1.10 takes the smallest angle from arccos when it mixes sine- and cosine-based angles, which is only
      // accurate to about √ε ≈ 2e-8 near 0 (here the fixture's exactly-shared direction gives 3.7e-8 there);
      // our sine-based value is ~1e-16. Angles away from 0 agree to 1e-10.
      angles.forEach((a, k) => {
        const tol = c.angles[k] < 1e-6 ? 1e-7 : 1e-10;
        expect(Math.abs(a - c.angles[k])).toBeLessThan(tol);
      });
      expect(angles[0]).toBeLessThan(1e-13); // one column of B lies in span(A)
    });
  }
});

function canonical(m: Float64Array, n: number, l: number): Float64Array {
  // Columns by decreasing sum of squares, largest-magnitude entry positive (same rule as the generator's canonical_columns).
  const ss = Array.from({ length: l }, (_, k) => {
    let s = 0;
    for (let i = 0; i < n; i++) s += m[i * l + k] ** 2;
    return s;
  });
  const order = ss.map((_, k) => k).sort((p, q) => ss[q] - ss[p]);
  const out = new Float64Array(n * l);
  order.forEach((src, dst) => {
    let best = 0;
    for (let i = 0; i < n; i++) if (Math.abs(m[i * l + src]) > Math.abs(best)) best = m[i * l + src];
    for (let i = 0; i < n; i++) out[i * l + dst] = (best < 0 ? -1 : 1) * m[i * l + src];
  });
  return out;
}

describe('varimax (Kaiser 1958), an interpretation aid', () => {
  it('recovers a simple structure hidden by a 30° rotation (hand-worked)', () => {
    // Simple structure: assets 0–2 load only on factor 1, assets 3–5 only on factor 2; rotate by 30°.
    const simple = Float64Array.from([0.8, 0, 0.7, 0, 0.6, 0, 0, 0.5, 0, 0.9, 0, 0.4]);
    const c = Math.cos(Math.PI / 6);
    const s = Math.sin(Math.PI / 6);
    const hidden = multiply(simple, Float64Array.from([c, -s, s, c]), 6, 2, 2);
    for (const normalize of [true, false]) {
      const result = varimax(hidden, 6, 2, { normalize });
      expect(result.label).toBe('interpretation aid');
      expect(result.converged).toBe(true);
      const expected = canonical(simple, 6, 2);
      for (let j = 0; j < 12; j++) expect(Math.abs(result.loadings[j] - expected[j])).toBeLessThan(1e-9);
      // W Wᵀ unchanged: the rotation is orthogonal.
      expect(checkRotationInvariance(hidden, 6, 2, result.rotation).relativeDifference).toBeLessThan(1e-12);
      // rotated = hidden · R
      const again = multiply(hidden, result.rotation, 6, 2, 2);
      for (let j = 0; j < 12; j++) expect(Math.abs(again[j] - result.loadings[j])).toBeLessThan(1e-14);
    }
  });

  for (const c of fixture.varimax) {
    it(`matches scikit-learn (raw) and R stats::varimax (normalised) for ${c.n} × ${c.l}`, () => {
      const raw = varimax(Float64Array.from(c.loadings), c.n, c.l, { normalize: false, tolerance: 1e-13 });
      // The references stop on a relative change of the criterion (1e-14 here); near the optimum the criterion is
      // quadratic in the loadings, so their loadings are only accurate to about 1e-7: compare at 1e-6, and check that
      // our criterion is at least theirs (we stop on the rotation angle, at 1e-12 rad).
      for (let j = 0; j < raw.loadings.length; j++) expect(Math.abs(raw.loadings[j] - c.raw[j])).toBeLessThan(1e-6);
      expect(raw.criterion).toBeGreaterThanOrEqual(varimaxCriterion(Float64Array.from(c.raw), c.n, c.l) - 1e-14);
      expect(raw.criterion).toBeGreaterThan(varimaxCriterion(Float64Array.from(c.loadings), c.n, c.l));
      if (c.normalised) {
        const norm = varimax(Float64Array.from(c.loadings), c.n, c.l, { normalize: true, tolerance: 1e-13 });
        for (let j = 0; j < norm.loadings.length; j++) expect(Math.abs(norm.loadings[j] - c.normalised[j])).toBeLessThan(1e-6);
      }
    });
  }
});
