/**
 * The CLI's fit step: checks that the input can support the requested model (with messages naming the problem), then
 * calls the engine's fitModel. The reported log-likelihood is that of the data at the fitted mean and covariance,
 * Σₜ log N(xₜ; μ̂, Σ̂) with missing entries marginalised, which equals −T/2 [N log 2π + log|Σ̂| + tr(Σ̂⁻¹S)] with the
 * 1/T sample covariance S (scikit-learn's FactorAnalysis.score × T).
 */
import { InputError, type ReturnsFile } from './csvInput';
import { fitModel, type FitDiagnostics, type FitMethod } from '../engine/fit';
import { chooseFactorCount } from '../engine/factorCount';
import { panelHasMissing } from '../engine/scatter';
import type { CovarianceModel, MeanHandling, Weighting } from '../engine/types';

export type CliMethod = FitMethod;

export interface CliFitOptions {
  method: CliMethod;
  /** L for fa/ppca; when absent it is chosen by chooseFactorCount (complete panels only). */
  factors?: number;
  halfLife?: number;
  zeroMean?: boolean;
}

export interface CliFit {
  method: CliMethod;
  model: CovarianceModel;
  diagnostics: FitDiagnostics;
  /** How L was chosen when --factors was not given. */
  factorChoice: { recommended: number; reason: string } | null;
}

/** Largest L tried when --factors is omitted. */
export const MAX_AUTOMATIC_FACTORS = 10;

/** Checks the panel against the request; throws InputError naming the problem. */
export function validateForFit(file: ReturnsFile, options: CliFitOptions): void {
  const { observations: t, assets: n, values } = file.panel;
  if (t < 2) throw new InputError(`too few observations: the returns file has ${t} date${t === 1 ? '' : 's'}; at least 2 are needed`);
  for (let i = 0; i < n; i++) {
    let observed = 0;
    for (let r = 0; r < t; r++) if (!Number.isNaN(values[r * n + i])) observed++;
    if (observed < 2) throw new InputError(`too few observations for "${file.symbols[i]}": ${observed} non-empty value${observed === 1 ? '' : 's'}; at least 2 are needed`);
  }
  if ((options.method === 'fa' || options.method === 'ppca') && options.factors !== undefined) {
    const l = options.factors;
    if (l >= n) throw new InputError(`--factors ${l} must be smaller than the number of assets (${n})`);
    if (l >= t) throw new InputError(`--factors ${l} needs more than ${l} observations; the returns file has ${t}`);
  }
  if ((options.method === 'fa' || options.method === 'ppca') && options.factors === undefined) {
    if (n < 2) throw new InputError('a factor model needs at least 2 assets');
    if (panelHasMissing(file.panel)) throw new InputError('the returns file has empty cells: give --factors L (the automatic choice of L needs a complete panel)');
  }
}

export function fitForCli(file: ReturnsFile, options: CliFitOptions): CliFit {
  validateForFit(file, options);
  const panel = file.panel;
  const weighting: Weighting = options.halfLife ? { kind: 'exponential', halfLife: options.halfLife } : { kind: 'equal' };
  const mean: MeanHandling = options.zeroMean ? 'zero' : 'sample';
  let factors = options.factors;
  let factorChoice: CliFit['factorChoice'] = null;
  if ((options.method === 'fa' || options.method === 'ppca') && factors === undefined) {
    const maxFactors = Math.min(MAX_AUTOMATIC_FACTORS, panel.assets - 1, panel.observations - 1);
    const choice = chooseFactorCount(panel, { maxFactors, mean });
    factors = choice.recommended;
    factorChoice = { recommended: choice.recommended, reason: choice.reason };
  }
  const { model, diagnostics } = fitModel(panel, { method: options.method, factors, weighting, mean });
  return { method: options.method, model, diagnostics, factorChoice };
}
