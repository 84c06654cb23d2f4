/**
 * Loadline command-line tool for nightly batches:
 *   npm run cli -- fit  --returns FILE.csv --method fa|ppca|sample|ledoit-wolf [--factors L] [--half-life H] [--zero-mean]
 *   npm run cli -- risk --returns FILE.csv --weights W.csv --method … [--factors L] [--half-life H] [--zero-mean]
 *                       [--benchmark B.csv] [--periods-per-year 252] [--horizon 1]
 * Prints one JSON object on stdout. Errors go to stderr with a non-zero exit status
 * (1: bad input or a failed fit; 2: bad command line).
 */
import { readFileSync } from 'node:fs';
import { parseArgs } from 'node:util';
import { InputError, parseReturnsCsv, parseWeightsCsv, type ReturnsFile } from './csvInput';
import { fitForCli, type CliFit, type CliMethod } from './fitting';
import { portfolioRisk, PERIODS_PER_YEAR } from '../engine/risk';

const USAGE = `usage:
  npm run cli -- fit  --returns FILE.csv --method fa|ppca|sample|ledoit-wolf [--factors L] [--half-life H] [--zero-mean]
  npm run cli -- risk --returns FILE.csv --weights W.csv --method fa|ppca|sample|ledoit-wolf [--factors L]
                      [--half-life H] [--zero-mean] [--benchmark B.csv] [--periods-per-year N] [--horizon H]
The returns file is a wide CSV: header date,SYM1,SYM2,… then one row per date (oldest first) of simple returns as
decimals; an empty cell is a missing value. Weights files are CSV with header symbol,weight.`;

class UsageError extends Error {}

const METHODS: readonly CliMethod[] = ['fa', 'ppca', 'sample', 'ledoit-wolf'];

function readText(path: string, what: string): string {
  try {
    return readFileSync(path, 'utf8');
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code;
    throw new InputError(`cannot read the ${what} "${path}"${code ? ` (${code})` : ''}`);
  }
}

function positiveNumber(value: string | undefined, flag: string): number | undefined {
  if (value === undefined) return undefined;
  const x = Number(value);
  if (!(value.trim() !== '' && Number.isFinite(x) && x > 0)) throw new UsageError(`${flag} must be a positive number, got "${value}"`);
  return x;
}

function parseCommandLine(argv: string[]) {
  let parsed;
  try {
    parsed = parseArgs({
      args: argv,
      allowPositionals: true,
      strict: true,
      options: {
        returns: { type: 'string' },
        method: { type: 'string' },
        factors: { type: 'string' },
        'half-life': { type: 'string' },
        'zero-mean': { type: 'boolean' },
        weights: { type: 'string' },
        benchmark: { type: 'string' },
        'periods-per-year': { type: 'string' },
        horizon: { type: 'string' },
        help: { type: 'boolean', short: 'h' },
      },
    });
  } catch (error) {
    throw new UsageError((error as Error).message);
  }
  const { values, positionals } = parsed;
  const command = positionals[0];
  if (values.help || command === undefined) return { help: true as const };
  if (command !== 'fit' && command !== 'risk') throw new UsageError(`unknown command "${command}" (expected fit or risk)`);
  if (positionals.length > 1) throw new UsageError(`unexpected argument "${positionals[1]}"`);
  if (!values.returns) throw new UsageError('--returns FILE.csv is required');
  if (!values.method) throw new UsageError(`--method is required (${METHODS.join(', ')})`);
  if (!METHODS.includes(values.method as CliMethod)) throw new UsageError(`unknown --method "${values.method}" (expected ${METHODS.join(', ')})`);
  const method = values.method as CliMethod;
  let factors: number | undefined;
  if (values.factors !== undefined) {
    if (method === 'sample' || method === 'ledoit-wolf') throw new UsageError(`--factors applies to fa and ppca only, not ${method}`);
    factors = Number(values.factors);
    if (!(/^\d+$/.test(values.factors) && factors >= 1)) throw new UsageError(`--factors must be a positive integer, got "${values.factors}"`);
  }
  if (command === 'fit' && (values.weights || values.benchmark)) throw new UsageError('--weights and --benchmark belong to the risk command');
  if (command === 'risk' && !values.weights) throw new UsageError('--weights W.csv is required for risk');
  return {
    help: false as const,
    command,
    returns: values.returns,
    method,
    factors,
    halfLife: positiveNumber(values['half-life'], '--half-life'),
    zeroMean: values['zero-mean'] ?? false,
    weights: values.weights,
    benchmark: values.benchmark,
    periodsPerYear: positiveNumber(values['periods-per-year'], '--periods-per-year') ?? PERIODS_PER_YEAR.daily,
    horizon: positiveNumber(values.horizon, '--horizon') ?? 1,
  };
}

const toArray = (a: ArrayLike<number>) => Array.from(a, (v) => (Number.isFinite(v) ? v : null));

function toRows(a: Float64Array, rows: number, cols: number): (number | null)[][] {
  return Array.from({ length: rows }, (_, i) => toArray(a.subarray(i * cols, (i + 1) * cols)));
}

function fitJson(file: ReturnsFile, fit: CliFit) {
  const { model, diagnostics: d } = fit;
  const n = model.assets;
  const factorModel = model.kind === 'factor' ? model : null;
  return {
    method: fit.method,
    factors: factorModel ? factorModel.factors : null,
    observations: d.observations,
    assets: file.symbols,
    firstDate: file.dates[0],
    lastDate: file.dates[file.dates.length - 1],
    mean: toArray(model.mean),
    loadings: factorModel ? toRows(factorModel.loadings, n, factorModel.factors) : null,
    loadingsOrientation: factorModel ? 'canonical: WᵀΨ⁻¹W diagonal, columns by decreasing variance, largest loading of each column positive' : null,
    specificVariance: factorModel ? toArray(factorModel.specificVariance) : null,
    covariance: model.kind === 'dense' ? toRows(model.covariance, n, n) : null,
    logLikelihood: d.logLikelihood,
    iterations: d.iterations,
    converged: d.converged,
    evaluations: d.evaluations,
    logLikelihoodTrace: d.trace,
    heywood: file.symbols.filter((_, i) => d.heywood[i]),
    noiseVariance: d.noiseVariance ?? null,
    shrinkage: d.shrinkage ?? null,
    spectrum: d.spectrum,
    weighting: d.weighting,
    meanHandling: d.mean,
    missingCells: file.missingCells,
    missingPolicy: d.missingPolicy,
    incompleteDates: d.incompleteDates,
    factorChoice: fit.factorChoice,
    flags: d.flags,
  };
}

function riskJson(file: ReturnsFile, fit: CliFit, weights: Float64Array, benchmark: Float64Array | undefined, periodsPerYear: number, horizon: number) {
  const risk = portfolioRisk(fit.model, weights, { periodsPerYear, horizon, benchmark });
  return {
    method: fit.method,
    factors: fit.model.kind === 'factor' ? fit.model.factors : null,
    observations: file.panel.observations,
    assets: file.symbols,
    periodsPerYear,
    variance: risk.variance,
    volatility: risk.volatility,
    annualisedVolatility: risk.annualisedVolatility,
    factorVariance: risk.factorVariance,
    specificVariance: risk.specificVariance,
    contributions: file.symbols.map((symbol, i) => ({
      symbol,
      weight: weights[i],
      marginal: risk.marginalContributions[i],
      contribution: risk.contributions[i],
      percent: risk.percentContributions[i],
    })),
    trackingError: risk.active ? { volatility: risk.active.volatility, annualised: risk.active.annualisedVolatility } : null,
    parametric: risk.parametric,
    exposure: risk.exposure
      ? { factorVarianceShare: risk.exposure.factorVarianceShare, exposureNorm: risk.exposure.exposureNorm, exposures: toArray(risk.exposure.exposures), caveat: risk.exposure.caveat }
      : null,
    assumptions: risk.assumptions,
    fit: { logLikelihood: fit.diagnostics.logLikelihood, iterations: fit.diagnostics.iterations, converged: fit.diagnostics.converged, flags: fit.diagnostics.flags },
    factorChoice: fit.factorChoice,
  };
}

export function main(argv: string[]): number {
  let args;
  try {
    args = parseCommandLine(argv);
  } catch (error) {
    process.stderr.write(`loadline: ${(error as Error).message}\n\n${USAGE}\n`);
    return 2;
  }
  if (args.help) {
    process.stdout.write(`${USAGE}\n`);
    return 0;
  }
  try {
    const file = parseReturnsCsv(readText(args.returns, 'returns file'), args.returns);
    let weights: Float64Array | undefined;
    let benchmark: Float64Array | undefined;
    if (args.command === 'risk') {
      weights = parseWeightsCsv(readText(args.weights!, 'weights file'), file.symbols, args.weights);
      if (args.benchmark) benchmark = parseWeightsCsv(readText(args.benchmark, 'benchmark file'), file.symbols, args.benchmark);
    }
    const fit = fitForCli(file, { method: args.method, factors: args.factors, halfLife: args.halfLife, zeroMean: args.zeroMean });
    const output = args.command === 'fit' ? fitJson(file, fit) : riskJson(file, fit, weights!, benchmark, args.periodsPerYear, args.horizon);
    process.stdout.write(`${JSON.stringify(output)}\n`);
    return 0;
  } catch (error) {
    const message = error instanceof InputError ? error.message : `the fit failed: ${(error as Error).message}`;
    process.stderr.write(`loadline: ${message}\n`);
    return 1;
  }
}

process.exitCode = main(process.argv.slice(2));
