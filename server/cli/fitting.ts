/**
 * The CLI's fit step: checks that the input can support the requested model (with messages naming the problem), then
 * fits it with the engine and reports the log-likelihood of the data at the fitted mean and covariance
 * (Σₜ log N(xₜ; μ̂, Σ̂), missing entries marginalised; this equals −T/2 [N log 2π + log|Σ̂| + tr(Σ̂⁻¹S)] with the 1/T
 * sample covariance S, the convention of scikit-learn's FactorAnalysis.score × T).
 */
import { InputError, type ReturnsFile } from './csvInput';
import type { CovarianceModel, FactorModel, MeanHandling, Weighting } from '../engine/types';
import { describeWeighting, type WeightingSummary } from '../engine/weights';
import { buildScatter, panelHasMissing } from '../engine/scatter';
import { fitPpca } from '../engine/ppca';
import { fitFactorAnalysis } from '../engine/factorAnalysis';
import { fitWithMissing } from '../engine/missing';
import { sampleCovariance } from '../engine/sampleCovariance';
import { ledoitWolf } from '../engine/ledoitWolf';
import { modelLogLikelihood } from '../engine/logLikelihood';

export type CliMethod = 'fa' | 'ppca' | 'sample' | 'ledoit-wolf';

export interface CliFitOptions {
  method: CliMethod;
  factors?: number;
  halfLife?: number;
  zeroMean?: boolean;
}

export interface CliFit {
  method: CliMethod;
  model: CovarianceModel;
  weighting: WeightingSummary;
  meanHandling: MeanHandling;
  logLikelihood: number;
  iterations: number;
  converged: boolean;
  /** Method-specific figures (shrinkage, Heywood cases, …), merged into the JSON output. */
  details: Record<string, unknown>;
  notes: string[];
}

/** Default number of factors when --factors is not given. */
export const DEFAULT_FACTORS = 1;

/** Checks the panel against the request; throws InputError naming the problem. */
export function validateForFit(file: ReturnsFile, options: CliFitOptions): number | undefined {
  const { observations: t, assets: n, values } = file.panel;
  if (t < 2) throw new InputError(`too few observations: the returns file has ${t} date${t === 1 ? '' : 's'}; at least 2 are needed`);
  for (let i = 0; i < n; i++) {
    let observed = 0;
    for (let r = 0; r < t; r++) if (!Number.isNaN(values[r * n + i])) observed++;
    if (observed < 2) throw new InputError(`too few observations for "${file.symbols[i]}": ${observed} non-empty value${observed === 1 ? '' : 's'}; at least 2 are needed`);
  }
  if (options.method === 'fa' || options.method === 'ppca') {
    const l = options.factors ?? DEFAULT_FACTORS;
    if (l >= n) throw new InputError(`--factors ${l} must be smaller than the number of assets (${n})`);
    if (l >= t) throw new InputError(`--factors ${l} needs more than ${l} observations; the returns file has ${t}`);
    return l;
  }
  return undefined;
}

export function fitForCli(file: ReturnsFile, options: CliFitOptions): CliFit {
  const factors = validateForFit(file, options);
  const panel = file.panel;
  const weighting: Weighting = options.halfLife ? { kind: 'exponential', halfLife: options.halfLife } : { kind: 'equal' };
  const mean: MeanHandling = options.zeroMean ? 'zero' : 'sample';
  const summary = describeWeighting(panel.observations, weighting);
  const notes: string[] = [];
  const base = { method: options.method, weighting: summary, meanHandling: mean };

  if (options.method === 'sample' || options.method === 'ledoit-wolf') {
    const result = options.method === 'sample' ? sampleCovariance(panel, { weighting, mean }) : ledoitWolf(panel, { weighting, mean });
    const model: CovarianceModel = { kind: 'dense', method: options.method, assets: panel.assets, mean: result.mean, covariance: result.covariance };
    if (result.pairwise) notes.push('missing values: pairwise-complete covariance' + (result.repairedToPsd ? ', repaired to the nearest positive semidefinite matrix (Higham 2002)' : ''));
    let logLikelihood = NaN;
    try {
      logLikelihood = modelLogLikelihood(model, panel);
    } catch (error) {
      notes.push(`log-likelihood not available: ${(error as Error).message}`);
    }
    if (!Number.isFinite(logLikelihood) && panel.observations <= panel.assets) notes.push('the covariance is singular (observations ≤ assets): its Gaussian log-likelihood is not finite');
    const details: Record<string, unknown> = { pairwise: result.pairwise, repairedToPsd: result.repairedToPsd };
    if ('shrinkage' in result) details.shrinkage = result.shrinkage;
    return { ...base, model, logLikelihood, iterations: 0, converged: true, details, notes };
  }

  const l = factors!;
  const method = options.method;
  let loadings: Float64Array;
  let specificVariance: Float64Array;
  let fittedMean: Float64Array;
  let iterations = 0;
  let converged = true;
  const details: Record<string, unknown> = {};
  if (panelHasMissing(panel)) {
    const result = fitWithMissing(panel, { method, factors: l, weighting, mean });
    ({ loadings, specificVariance, mean: fittedMean, iterations, converged } = result);
    details.heywood = method === 'fa' ? file.symbols.filter((_, i) => result.heywood[i]) : [];
    notes.push(`missing values: ${result.missingEntries} entries on ${result.incompleteDates} dates, handled by EM with missing data`);
  } else {
    const scatter = buildScatter(panel, { weighting, mean });
    fittedMean = scatter.mean;
    if (method === 'ppca') {
      const result = fitPpca(scatter, l);
      loadings = result.loadings;
      specificVariance = new Float64Array(panel.assets).fill(result.noiseVariance);
      details.noiseVariance = result.noiseVariance;
    } else {
      const result = fitFactorAnalysis(scatter, l);
      ({ loadings, specificVariance, iterations, converged } = result);
      details.heywood = file.symbols.filter((_, i) => result.heywood[i]);
    }
  }
  const model: FactorModel = { kind: 'factor', method, assets: panel.assets, factors: l, mean: fittedMean, loadings, specificVariance };
  return { ...base, model, logLikelihood: modelLogLikelihood(model, panel), iterations, converged, details, notes };
}
