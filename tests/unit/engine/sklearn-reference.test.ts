/**
 * Checks against scikit-learn 1.2 / numpy 1.24 (Debian), fixtures written by tests/reference/generate_sklearn.py
 * on invented planted-factor panels. Tolerances are those of the engine's specification.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { fitModel } from '../../../server/engine/fit';
import { ledoitWolf } from '../../../server/engine/ledoitWolf';
import { factorModelLogLikelihood } from '../../../server/engine/logLikelihood';
import { fitPpca, topSpectrum } from '../../../server/engine/ppca';
import { sampleCovariance } from '../../../server/engine/sampleCovariance';
import { buildScatter } from '../../../server/engine/scatter';
import type { FactorModel, ReturnsPanel } from '../../../server/engine/types';

interface Case {
  name: string;
  assets: number;
  observations: number;
  factors: number;
  values: number[];
  fa: { loglike: number; score: number; noiseVariance: number[]; components: number[]; mean: number[] };
  ppca: { sigma2Closed: number; topEigenvalues: number[]; sklearnNoiseVariance: number; sklearnExplainedVariance: number[]; sklearnComponents: number[]; sklearnScore: number };
  ledoitWolf: { shrinkage: number; shrinkageZeroMean: number; covarianceDiagonal: number[]; covarianceFrobenius: number; covariance?: number[]; firstRows?: number[] };
  numpyCov: { diagonal: number[]; frobenius: number; weightedHalfLife: number; weightedFrobenius: number; weightedDiagonal: number[]; covariance?: number[]; weightedCovariance?: number[]; firstRows?: number[] };
}

const fixture = JSON.parse(readFileSync(new URL('../../reference/fixtures/engine_sklearn.json', import.meta.url), 'utf8')) as { cases: Case[] };

const panelOf = (c: Case): ReturnsPanel => ({ values: Float64Array.from(c.values), observations: c.observations, assets: c.assets });
const relDiff = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);
function relFrob(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let d = 0;
  let r = 0;
  for (let i = 0; i < b.length; i++) {
    d += (a[i] - b[i]) ** 2;
    r += b[i] ** 2;
  }
  return Math.sqrt(d / r);
}
function frob(a: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] ** 2;
  return Math.sqrt(s);
}
/** Dense W Wᵀ + diag ψ from W (N × L row-major). */
function lowRank(w: ArrayLike<number>, psi: ArrayLike<number>, n: number, l: number): Float64Array {
  const s = new Float64Array(n * n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) {
    let v = i === j ? psi[i] : 0;
    for (let k = 0; k < l; k++) v += w[i * l + k] * w[j * l + k];
    s[i * n + j] = v;
  }
  return s;
}

describe.each(fixture.cases)('scikit-learn reference $name', (c) => {
  const panel = panelOf(c);
  const n = c.assets;
  const l = c.factors;

  it('FA reaches at least scikit-learn FactorAnalysis (lapack, converged) log-likelihood and the same W Wᵀ + Ψ', () => {
    // Rubin & Thayer (1982) EM + SQUAREM vs scikit-learn's iterated-SVD ML fit: same optimum.
    const fit = fitModel(panel, { method: 'fa', factors: l });
    const model = fit.model as FactorModel;
    expect(fit.diagnostics.converged).toBe(true);
    expect(fit.diagnostics.logLikelihood!).toBeGreaterThanOrEqual(c.fa.loglike - 1e-6 * Math.abs(c.fa.loglike));
    // sklearn components_ is L × N: W = componentsᵀ
    const wRef = new Float64Array(n * l);
    for (let k = 0; k < l; k++) for (let i = 0; i < n; i++) wRef[i * l + k] = c.fa.components[k * n + i];
    const sigmaRef = lowRank(wRef, c.fa.noiseVariance, n, l);
    const sigma = lowRank(model.loadings, model.specificVariance, n, l);
    expect(relFrob(sigma, sigmaRef)).toBeLessThan(1e-4);
    // the engine's direct evaluation of the likelihood on the data agrees with scikit-learn's score (mean per date)
    const refModel: FactorModel = { kind: 'factor', method: 'fa', assets: n, factors: l, mean: Float64Array.from(c.fa.mean), loadings: wRef, specificVariance: Float64Array.from(c.fa.noiseVariance) };
    expect(relDiff(factorModelLogLikelihood(refModel, panel) / c.observations, c.fa.score)).toBeLessThan(1e-10);
  });

  it('PPCA σ² matches the closed form (Tipping & Bishop 1999, eq. 8) and the spectrum matches numpy.linalg.eigvalsh', () => {
    const scatter = buildScatter(panel, { form: 'data' });
    const ppca = fitPpca(scatter, l, l + 2);
    expect(relDiff(ppca.noiseVariance, c.ppca.sigma2Closed)).toBeLessThan(1e-10);
    for (let k = 0; k < l + 2; k++) expect(relDiff(ppca.spectrum[k], c.ppca.topEigenvalues[k])).toBeLessThan(1e-10);
    // the covariance-side eigenproblem gives the same values as the Gram-side one
    const dense = topSpectrum(buildScatter(panel, { form: 'dense' }), l);
    for (let k = 0; k < l; k++) expect(relDiff(dense.values[k], c.ppca.topEigenvalues[k])).toBeLessThan(1e-10);
  });

  it('PPCA log-likelihood evaluation agrees with scikit-learn PCA.score', () => {
    // scikit-learn's PCA model: W = Cᵀ (Λ − σ²)^½ with its own (1/(T−1)) variances; we score its model on the data.
    const ev = c.ppca.sklearnExplainedVariance;
    const s2 = c.ppca.sklearnNoiseVariance;
    const w = new Float64Array(n * l);
    for (let k = 0; k < l; k++) for (let i = 0; i < n; i++) w[i * l + k] = c.ppca.sklearnComponents[k * n + i] * Math.sqrt(Math.max(ev[k] - s2, 0));
    const mean = new Float64Array(n);
    for (let t = 0; t < c.observations; t++) for (let i = 0; i < n; i++) mean[i] += c.values[t * n + i] / c.observations;
    const model: FactorModel = { kind: 'factor', method: 'ppca', assets: n, factors: l, mean, loadings: w, specificVariance: new Float64Array(n).fill(s2) };
    expect(relDiff(factorModelLogLikelihood(model, panel) / c.observations, c.ppca.sklearnScore)).toBeLessThan(1e-9);
    if (c.observations > n) {
      // When T > N scikit-learn's σ² is the closed form on the 1/(T−1) covariance.
      const ours = fitPpca(buildScatter(panel), l).noiseVariance * (c.observations / (c.observations - 1));
      expect(relDiff(ours, s2)).toBeLessThan(1e-10);
    }
  });

  it('Ledoit–Wolf shrinkage and covariance match scikit-learn LedoitWolf (1/T, centred)', () => {
    const lw = ledoitWolf(panel);
    expect(Math.abs(lw.shrinkage - c.ledoitWolf.shrinkage)).toBeLessThan(1e-10);
    expect(relDiff(frob(lw.covariance), c.ledoitWolf.covarianceFrobenius)).toBeLessThan(1e-10);
    for (let i = 0; i < n; i++) expect(relDiff(lw.covariance[i * n + i], c.ledoitWolf.covarianceDiagonal[i])).toBeLessThan(1e-10);
    if (c.ledoitWolf.covariance) expect(relFrob(lw.covariance, c.ledoitWolf.covariance)).toBeLessThan(1e-10);
    if (c.ledoitWolf.firstRows) expect(relFrob(lw.covariance.subarray(0, 5 * n), c.ledoitWolf.firstRows)).toBeLessThan(1e-10);
    const lw0 = ledoitWolf(panel, { mean: 'zero' });
    expect(Math.abs(lw0.shrinkage - c.ledoitWolf.shrinkageZeroMean)).toBeLessThan(1e-10);
  });

  it('sample covariance matches numpy.cov, unweighted and with exponential aweights', () => {
    const s = sampleCovariance(panel);
    expect(relDiff(frob(s.covariance), c.numpyCov.frobenius)).toBeLessThan(1e-10);
    for (let i = 0; i < n; i++) expect(relDiff(s.covariance[i * n + i], c.numpyCov.diagonal[i])).toBeLessThan(1e-10);
    if (c.numpyCov.covariance) expect(relFrob(s.covariance, c.numpyCov.covariance)).toBeLessThan(1e-10);
    if (c.numpyCov.firstRows) expect(relFrob(s.covariance.subarray(0, 5 * n), c.numpyCov.firstRows)).toBeLessThan(1e-10);
    const sw = sampleCovariance(panel, { weighting: { kind: 'exponential', halfLife: c.numpyCov.weightedHalfLife } });
    expect(relDiff(frob(sw.covariance), c.numpyCov.weightedFrobenius)).toBeLessThan(1e-10);
    for (let i = 0; i < n; i++) expect(relDiff(sw.covariance[i * n + i], c.numpyCov.weightedDiagonal[i])).toBeLessThan(1e-10);
    if (c.numpyCov.weightedCovariance) expect(relFrob(sw.covariance, c.numpyCov.weightedCovariance)).toBeLessThan(1e-10);
  });
});
