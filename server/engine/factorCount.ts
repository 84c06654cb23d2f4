/**
 * Choosing the number of factors L. For L = 1 … Lmax, on a complete panel:
 *  - FA log-likelihood ℓ_L (factorAnalysis.ts), AIC = −2ℓ + 2p (Akaike 1974), BIC = −2ℓ + p ln T (Schwarz 1978),
 *    with the free-parameter count of the FA model p = N·L + N − L(L−1)/2 (loadings and uniquenesses less the
 *    rotational freedom; Lawley & Maxwell 1971), plus N when means are estimated;
 *  - Bai & Ng (2002, Econometrica 70, criterion IC_p2): ln V(L) + L · (N+T)/(N T) · ln min(N, T), V(L) the mean
 *    squared residual after L principal components, V(L) = (tr S − Σ_{j≤L} λ_j) / N;
 *  - Ahn & Horenstein (2013, Econometrica 81) eigenvalue ratio ER(L) = λ_L / λ_{L+1};
 *  - held-out log-likelihood: the panel is cut into contiguous time blocks; each block is scored by an FA model fitted
 *    on the other blocks (per-observation average reported);
 *  - the Marchenko–Pastur upper edge σ²(1 + √(N/T))² (Marchenko & Pastur 1967) for reading the spectrum, σ² the bulk
 *    variance fitted by iterating σ² = (tr S − Σ_{λ > edge} λ)/(N − #above) from tr S / N (Laloux et al. 2000 fit
 *    the bulk similarly).
 * The recommendation is the held-out maximiser when held-out blocks are used (out-of-sample evidence), else BIC's.
 */
import { fitFactorAnalysis } from './factorAnalysis';
import { factorModelLogLikelihood } from './logLikelihood';
import { topSpectrum } from './ppca';
import { buildScatter, panelHasMissing } from './scatter';
import type { FitControl, MeanHandling, ReturnsPanel } from './types';

export interface FactorCountRow {
  factors: number;
  logLikelihood: number;
  parameters: number;
  aic: number;
  bic: number;
  baiNgIcp2: number;
  /** λ_L / λ_{L+1}. */
  eigenvalueRatio: number;
  /** Mean held-out log-likelihood per observation (null when not computed). */
  heldOutLogLikelihood: number | null;
  converged: boolean;
}

export interface FactorCountResult {
  rows: FactorCountRow[];
  eigenvalues: number[];
  marchenkoPasturEdge: number;
  bulkVariance: number;
  eigenvaluesAboveEdge: number;
  best: { aic: number; bic: number; baiNg: number; eigenvalueRatio: number; heldOut: number | null };
  recommended: number;
  reason: string;
}

export interface FactorCountOptions {
  maxFactors: number;
  mean?: MeanHandling;
  /** Contiguous time blocks for held-out scoring (default 5; 0 to skip). */
  heldOutBlocks?: number;
  tolerance?: number;
}

export function freeParameters(n: number, l: number, meanEstimated: boolean): number {
  return n * l + n - (l * (l - 1)) / 2 + (meanEstimated ? n : 0);
}

/**
 * Marchenko–Pastur upper edge σ²(1 + √(N/T))² (Marchenko & Pastur 1967) for reading a sample spectrum, with the bulk
 * variance σ² fitted by iterating σ² = (tr S − Σ_{λ > edge} λ)/(N − #above) from tr S / N (Laloux et al. 2000 fit the
 * bulk similarly). `eigenvalues` are the top ones in decreasing order; `above` counts those over the edge.
 */
export function marchenkoPasturEdge(eigenvalues: ArrayLike<number>, trace: number, n: number, t: number): { edge: number; bulkVariance: number; above: number } {
  const widen = (1 + Math.sqrt(n / t)) ** 2;
  let sigma2 = trace / n;
  for (let it = 0; it < 50; it++) {
    const edge = sigma2 * widen;
    let k = 0;
    let top = 0;
    while (k < eigenvalues.length && eigenvalues[k] > edge) top += eigenvalues[k++];
    const next = (trace - top) / (n - k);
    if (!(next > 0) || Math.abs(next - sigma2) <= 1e-14 * sigma2) break;
    sigma2 = next;
  }
  const edge = sigma2 * widen;
  let above = 0;
  while (above < eigenvalues.length && eigenvalues[above] > edge) above++;
  return { edge, bulkVariance: sigma2, above };
}

export function chooseFactorCount(panel: ReturnsPanel, options: FactorCountOptions, control: FitControl = {}): FactorCountResult {
  if (panelHasMissing(panel)) throw new Error('choosing the number of factors needs a complete panel (drop or fill incomplete dates first)');
  const { observations: t, assets: n } = panel;
  const lmax = options.maxFactors;
  if (!(Number.isInteger(lmax) && lmax >= 1 && lmax < n)) throw new Error(`maxFactors must be an integer in [1, ${n - 1}], got ${lmax}`);
  const mean = options.mean ?? 'sample';
  const tol = options.tolerance ?? 1e-10;
  const scatter = buildScatter(panel, { mean, form: 'auto', blockWidth: lmax, expectedApplications: 100 * lmax });
  const spec = topSpectrum(scatter, Math.min(n, lmax + 1));
  const eig = Array.from(spec.values);
  const { edge, bulkVariance: sigma2, above } = marchenkoPasturEdge(eig, scatter.trace, n, t);

  const blocks = options.heldOutBlocks ?? 5;
  const rows: FactorCountRow[] = [];
  let cumulative = 0;
  for (let l = 1; l <= lmax; l++) {
    const fa = fitFactorAnalysis(scatter, l, { tolerance: tol }, control);
    const p = freeParameters(n, l, mean === 'sample');
    cumulative += eig[l - 1];
    const v = (scatter.trace - cumulative) / n;
    const icp2 = Math.log(v) + l * ((n + t) / (n * t)) * Math.log(Math.min(n, t));
    rows.push({
      factors: l,
      logLikelihood: fa.logLikelihood,
      parameters: p,
      aic: -2 * fa.logLikelihood + 2 * p,
      bic: -2 * fa.logLikelihood + p * Math.log(t),
      baiNgIcp2: icp2,
      eigenvalueRatio: l < eig.length && eig[l] > 0 ? eig[l - 1] / eig[l] : NaN,
      heldOutLogLikelihood: null,
      converged: fa.converged,
    });
  }
  if (blocks >= 2) {
    const size = Math.floor(t / blocks);
    if (size < 1 || t - size < n / 4 + 2) throw new Error(`too few observations (${t}) for ${blocks} held-out blocks`);
    const totals = new Array<number>(lmax).fill(0);
    for (let b = 0; b < blocks; b++) {
      const from = b * size;
      const to = b === blocks - 1 ? t : from + size;
      const trainRows = t - (to - from);
      const train = new Float64Array(trainRows * n);
      train.set(panel.values.subarray(0, from * n), 0);
      train.set(panel.values.subarray(to * n), from * n);
      const test: ReturnsPanel = { values: panel.values.subarray(from * n, to * n) as Float64Array, observations: to - from, assets: n };
      const trainScatter = buildScatter({ values: train, observations: trainRows, assets: n }, { mean, form: 'auto', blockWidth: lmax, expectedApplications: 100 * lmax });
      for (let l = 1; l <= lmax; l++) {
        const fa = fitFactorAnalysis(trainScatter, l, { tolerance: tol }, control);
        totals[l - 1] += factorModelLogLikelihood(
          { kind: 'factor', method: 'fa', assets: n, factors: l, mean: trainScatter.mean, loadings: fa.loadings, specificVariance: fa.specificVariance },
          test,
        );
      }
    }
    for (let l = 1; l <= lmax; l++) rows[l - 1].heldOutLogLikelihood = totals[l - 1] / t;
  }
  const argmin = (f: (r: FactorCountRow) => number) => rows.reduce((best, r) => (f(r) < f(best) ? r : best)).factors;
  const argmax = (f: (r: FactorCountRow) => number) => rows.reduce((best, r) => (f(r) > f(best) ? r : best)).factors;
  const best = {
    aic: argmin((r) => r.aic),
    bic: argmin((r) => r.bic),
    baiNg: argmin((r) => r.baiNgIcp2),
    eigenvalueRatio: argmax((r) => (Number.isNaN(r.eigenvalueRatio) ? -Infinity : r.eigenvalueRatio)),
    heldOut: blocks >= 2 ? argmax((r) => r.heldOutLogLikelihood ?? -Infinity) : null,
  };
  const recommended = best.heldOut ?? best.bic;
  const basis = best.heldOut !== null ? `the held-out log-likelihood over ${blocks} contiguous time blocks peaks at L = ${best.heldOut}` : `BIC is lowest at L = ${best.bic}`;
  const reason =
    `${basis}; BIC prefers ${best.bic}, AIC ${best.aic}, Bai–Ng IC_p2 ${best.baiNg}, the Ahn–Horenstein eigenvalue ratio ${best.eigenvalueRatio}; ` +
    `${above} eigenvalue${above === 1 ? '' : 's'} lie above the Marchenko–Pastur edge ${edge.toExponential(3)}.` +
    (recommended === lmax ? ' The choice sits at the largest L tried: consider a larger maximum.' : '');
  return { rows, eigenvalues: eig, marchenkoPasturEdge: edge, bulkVariance: sigma2, eigenvaluesAboveEdge: above, best, recommended, reason };
}
