/**
 * Portfolio risk for any covariance model. Factor models use the low-rank form
 * Σ = W Wᵀ + diag Ψ: every figure below costs O(N·L) per portfolio and never forms N × N
 * (w'Σw = ‖Wᵀw‖² + Σᵢ Ψᵢwᵢ²). Dense models (sample, Ledoit–Wolf) use Σw directly, O(N²).
 *
 * Figures are model estimates, not guarantees: they assume the fitted covariance holds over the horizon,
 * and the parametric VaR/ES assume normal returns and square-root-of-time scaling.
 */
import type { CovarianceModel } from './types';
import { assertWeights, covarianceTimes, loadingsTransposeTimes } from './lowRank';
import { NORMAL_QUANTILE_95, NORMAL_QUANTILE_99, normalDensity, normalQuantile } from './normalDistribution';
import { createRandom, type Random } from './random';
import { sampleReturns, semidefiniteCholesky } from './sampling';

/** Periods per year used to annualise volatility by √(periods per year): common practice. */
export const PERIODS_PER_YEAR = { daily: 252, weekly: 52, monthly: 12 } as const;

export const DEFAULT_CONFIDENCE_LEVELS = [0.95, 0.99] as const;

export const EXPOSURE_CAVEAT =
  'Exposures to single factors depend on the orientation of the loadings (here the canonical one: WᵀΨ⁻¹W diagonal, ' +
  'columns by decreasing variance, each column’s largest loading positive). Any rotation W → WR fits the data equally ' +
  'well; only the factor variance share and ‖Wᵀw‖ are rotation-invariant.';

export const RISK_ASSUMPTIONS = [
  'Model estimates, not guarantees: past volatility may not predict future volatility.',
  'Parametric VaR and expected shortfall assume normally distributed returns.',
  'Horizons longer than one period use square-root-of-time scaling (independent, identically distributed returns).',
  'The firm’s risk policy governs any decision taken on these figures.',
] as const;

export interface RiskOptions {
  /** Periods per year for annualisation (default 252, daily). */
  periodsPerYear?: number;
  /** VaR/ES horizon in periods (default 1). */
  horizon?: number;
  /** Confidence levels for VaR/ES (default 0.95 and 0.99). */
  confidenceLevels?: readonly number[];
  /** Benchmark weights for active risk (tracking error). */
  benchmark?: ArrayLike<number>;
  /** Include the model's mean return in VaR/ES (default false: zero mean, common practice for daily risk). */
  includeMean?: boolean;
}

export interface TailRisk {
  confidence: number;
  /** The standard normal quantile Φ⁻¹(confidence) used (exact, e.g. 1.6448536… for 95 %). */
  quantile: number;
  horizon: number;
  /** Loss as a positive fraction of portfolio value. */
  valueAtRisk: number;
  expectedShortfall: number;
}

export interface VarianceBreakdown {
  variance: number;
  volatility: number;
  annualisedVolatility: number;
  /** ‖Wᵀw‖² for factor models; null for dense models. */
  factorVariance: number | null;
  /** Σᵢ Ψᵢwᵢ² for factor models; null for dense models. */
  specificVariance: number | null;
  /** ∂σ/∂wᵢ = (Σw)ᵢ / σ (Euler marginal contribution). */
  marginalContributions: Float64Array;
  /** wᵢ (Σw)ᵢ / σ; they sum to σ (Euler's theorem for the degree-1 homogeneous σ(w)). */
  contributions: Float64Array;
  /** wᵢ (Σw)ᵢ / σ²; they sum to 1. */
  percentContributions: Float64Array;
}

export interface ExposureSummary {
  /** ‖Wᵀw‖² / w'Σw: rotation-invariant. */
  factorVarianceShare: number;
  /** ‖Wᵀw‖: rotation-invariant. */
  exposureNorm: number;
  /** Wᵀw in the model's (canonical) orientation: depends on the orientation. */
  exposures: Float64Array;
  caveat: string;
}

export interface PortfolioRisk extends VarianceBreakdown {
  periodsPerYear: number;
  /** wᵀμ, the model's mean return per period. */
  meanReturn: number;
  parametric: TailRisk[];
  /** Active risk against the benchmark, when one was given. */
  active: (VarianceBreakdown & { activeWeights: Float64Array }) | null;
  /** Rotation-invariant exposure summary (factor models only). */
  exposure: ExposureSummary | null;
  assumptions: readonly string[];
}

function checkOptions(options: RiskOptions): Required<Omit<RiskOptions, 'benchmark'>> {
  const periodsPerYear = options.periodsPerYear ?? PERIODS_PER_YEAR.daily;
  const horizon = options.horizon ?? 1;
  const confidenceLevels = options.confidenceLevels ?? DEFAULT_CONFIDENCE_LEVELS;
  if (!(periodsPerYear > 0) || !Number.isFinite(periodsPerYear)) throw new Error(`periodsPerYear must be positive, got ${periodsPerYear}`);
  if (!(horizon > 0) || !Number.isFinite(horizon)) throw new Error(`horizon must be a positive number of periods, got ${horizon}`);
  for (const c of confidenceLevels) {
    if (!(c > 0 && c < 1)) throw new Error(`confidence levels must lie in (0, 1), got ${c}`);
  }
  return { periodsPerYear, horizon, confidenceLevels, includeMean: options.includeMean ?? false };
}

/** Standard normal quantile, returning the named exact constants at the two usual levels. */
export function confidenceQuantile(confidence: number): number {
  if (confidence === 0.95) return NORMAL_QUANTILE_95;
  if (confidence === 0.99) return NORMAL_QUANTILE_99;
  return normalQuantile(confidence);
}

/**
 * Variance, factor/specific split and Euler contributions (Tasche 1999; Litterman 1996) of weights w.
 * Factor model: w'Σw = ‖Wᵀw‖² + Σᵢ Ψᵢwᵢ²; Σw = W(Wᵀw) + Ψ∘w.
 */
export function varianceBreakdown(model: CovarianceModel, weights: ArrayLike<number>, periodsPerYear: number = PERIODS_PER_YEAR.daily): VarianceBreakdown {
  return breakdownFromProducts(model, weights, products(model, weights), periodsPerYear);
}

/** Σw and, for factor models, y = Wᵀw: the two O(N·L) passes everything else is built from. */
interface Products {
  sigmaW: Float64Array;
  exposures: Float64Array | null;
}

function products(model: CovarianceModel, weights: ArrayLike<number>): Products {
  if (model.kind === 'dense') return { sigmaW: covarianceTimes(model, weights), exposures: null };
  const n = model.assets;
  const { factors: l, loadings, specificVariance: psi } = model;
  const y = loadingsTransposeTimes(model, weights);
  const sigmaW = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let s = psi[i] * weights[i];
    const row = i * l;
    for (let k = 0; k < l; k++) s += loadings[row + k] * y[k];
    sigmaW[i] = s;
  }
  return { sigmaW, exposures: y };
}

function breakdownFromProducts(model: CovarianceModel, weights: ArrayLike<number>, { sigmaW, exposures }: Products, periodsPerYear: number): VarianceBreakdown {
  const n = model.assets;
  let variance = 0;
  let factorVariance: number | null = null;
  let specificVariance: number | null = null;
  if (model.kind === 'factor' && exposures) {
    let fv = 0;
    for (let k = 0; k < exposures.length; k++) fv += exposures[k] * exposures[k];
    let sv = 0;
    for (let i = 0; i < n; i++) sv += model.specificVariance[i] * weights[i] * weights[i];
    factorVariance = fv;
    specificVariance = sv;
    variance = fv + sv; // w'Σw summed from its two non-negative parts
  } else {
    for (let i = 0; i < n; i++) variance += weights[i] * sigmaW[i];
    variance = Math.max(variance, 0);
  }
  const volatility = Math.sqrt(variance);
  const marginalContributions = new Float64Array(n);
  const contributions = new Float64Array(n);
  const percentContributions = new Float64Array(n);
  if (volatility > 0) {
    for (let i = 0; i < n; i++) {
      marginalContributions[i] = sigmaW[i] / volatility;
      contributions[i] = weights[i] * marginalContributions[i];
      percentContributions[i] = (weights[i] * sigmaW[i]) / variance;
    }
  }
  return {
    variance,
    volatility,
    annualisedVolatility: volatility * Math.sqrt(periodsPerYear),
    factorVariance,
    specificVariance,
    marginalContributions,
    contributions,
    percentContributions,
  };
}

/**
 * Normal VaR and ES of a position with per-period mean m and volatility σ over h periods, square-root-of-time:
 * VaR_α = z_α σ √h − m h,  ES_α = σ √h φ(z_α)/(1 − α) − m h
 * (McNeil, Frey & Embrechts 2005, Quantitative Risk Management, Example 2.14 for normal VaR and ES; cited from memory).
 */
export function parametricTailRisk(volatility: number, meanReturn: number, horizon: number, confidence: number): TailRisk {
  const z = confidenceQuantile(confidence);
  const scale = volatility * Math.sqrt(horizon);
  const drift = meanReturn * horizon;
  return {
    confidence,
    quantile: z,
    horizon,
    valueAtRisk: z * scale - drift,
    expectedShortfall: (scale * normalDensity(z)) / (1 - confidence) - drift,
  };
}

/** Full risk report of one portfolio. */
export function portfolioRisk(model: CovarianceModel, weights: ArrayLike<number>, options: RiskOptions = {}): PortfolioRisk {
  assertWeights(model, weights);
  if (options.benchmark) assertWeights(model, options.benchmark, 'benchmark weights');
  return riskUnchecked(model, weights, checkOptions(options), prepareBenchmark(model, options.benchmark));
}

/** A benchmark with its products Σb and Wᵀb, computed once for a whole batch. */
interface PreparedBenchmark {
  weights: ArrayLike<number>;
  products: Products;
}

function prepareBenchmark(model: CovarianceModel, benchmark: ArrayLike<number> | undefined): PreparedBenchmark | undefined {
  return benchmark ? { weights: benchmark, products: products(model, benchmark) } : undefined;
}

function riskUnchecked(
  model: CovarianceModel,
  weights: ArrayLike<number>,
  opts: Required<Omit<RiskOptions, 'benchmark'>>,
  benchmark: PreparedBenchmark | undefined,
): PortfolioRisk {
  const n = model.assets;
  const own = products(model, weights);
  const breakdown = breakdownFromProducts(model, weights, own, opts.periodsPerYear);
  const exposures = own.exposures;
  let meanReturn = 0;
  for (let i = 0; i < n; i++) meanReturn += weights[i] * model.mean[i];
  const drift = opts.includeMean ? meanReturn : 0;
  const parametric = opts.confidenceLevels.map((c) => parametricTailRisk(breakdown.volatility, drift, opts.horizon, c));

  let active: PortfolioRisk['active'] = null;
  if (benchmark) {
    // Linearity: Σ(w − b) = Σw − Σb and Wᵀ(w − b) = Wᵀw − Wᵀb, so active risk costs O(N) more per portfolio.
    const activeWeights = new Float64Array(n);
    const sigmaA = new Float64Array(n);
    const b = benchmark.products;
    for (let i = 0; i < n; i++) {
      activeWeights[i] = weights[i] - benchmark.weights[i];
      sigmaA[i] = own.sigmaW[i] - b.sigmaW[i];
    }
    let exposuresA: Float64Array | null = null;
    if (own.exposures && b.exposures) {
      exposuresA = new Float64Array(own.exposures.length);
      for (let k = 0; k < exposuresA.length; k++) exposuresA[k] = own.exposures[k] - b.exposures[k];
    }
    active = { ...breakdownFromProducts(model, activeWeights, { sigmaW: sigmaA, exposures: exposuresA }, opts.periodsPerYear), activeWeights };
  }

  let exposure: ExposureSummary | null = null;
  if (exposures) {
    const factorVariance = breakdown.factorVariance ?? 0;
    exposure = {
      factorVarianceShare: breakdown.variance > 0 ? factorVariance / breakdown.variance : 0,
      exposureNorm: Math.sqrt(factorVariance),
      exposures,
      caveat: EXPOSURE_CAVEAT,
    };
  }
  return { ...breakdown, periodsPerYear: opts.periodsPerYear, meanReturn, parametric, active, exposure, assumptions: RISK_ASSUMPTIONS };
}

/**
 * Risk of many portfolios on one model (e.g. every fund of a firm each night). The options (and benchmark) apply to
 * all portfolios. Factor models: O(P·N·L) in all.
 */
export function portfolioRiskBatch(model: CovarianceModel, portfolios: readonly ArrayLike<number>[], options: RiskOptions = {}): PortfolioRisk[] {
  const opts = checkOptions(options);
  if (options.benchmark) assertWeights(model, options.benchmark, 'benchmark weights');
  const benchmark = prepareBenchmark(model, options.benchmark);
  return portfolios.map((w, p) => {
    assertWeights(model, w, `portfolio ${p} weights`);
    return riskUnchecked(model, w, opts, benchmark);
  });
}

export interface MonteCarloOptions {
  seed: number;
  /** Number of simulated periods (default 10 000). */
  draws?: number;
  horizon?: number;
  confidenceLevels?: readonly number[];
  includeMean?: boolean;
  /**
   * 'portfolio' (default): draw the factors z and the portfolios' joint specific returns (w_pᵀε)_p ~ N(0, PᵀΨP)
   * directly — exact for the generative model and O(draws·(L + P)·P). 'panel': draw whole N-asset return vectors
   * with sampleReturns and value the portfolios on them — O(draws·N·L), for validation.
   */
  method?: 'portfolio' | 'panel';
  /** Draws simulated at a time by the 'panel' method (memory bound; default 1000). */
  chunkSize?: number;
}

export interface MonteCarloTailRisk {
  confidence: number;
  horizon: number;
  /** Empirical α-quantile of simulated losses, L_(⌈nα⌉) of the sorted losses. */
  valueAtRisk: number;
  /** Mean of the n − ⌈nα⌉ largest simulated losses (Acerbi & Tasche 2002, the natural ES estimator). */
  expectedShortfall: number;
}

export interface MonteCarloRisk {
  draws: number;
  seed: number;
  /** Sample volatility of the simulated one-period returns (a check against the model volatility). */
  simulatedVolatility: number;
  levels: MonteCarloTailRisk[];
}

/**
 * Monte Carlo VaR/ES from the model's generative form (x = μ + Wz + ε; see sampling.ts): draws one-period returns of
 * every portfolio on the same draws (portfolio-level by default, whole return vectors with method 'panel') and scales
 * to h periods as h·m + √h·(r − m), exact in distribution for i.i.d. Gaussian periods (the same square-root-of-time
 * assumption as the parametric figures). Because the model is Gaussian, these figures agree with the parametric ones
 * up to sampling error (about √(α(1−α)/n)/(φ(z)·z) relative for VaR); they are a cross-check, seeded and repeatable.
 */
export function monteCarloRisk(model: CovarianceModel, portfolios: readonly ArrayLike<number>[], options: MonteCarloOptions): MonteCarloRisk[] {
  const draws = options.draws ?? 10_000;
  const horizon = options.horizon ?? 1;
  const levels = options.confidenceLevels ?? DEFAULT_CONFIDENCE_LEVELS;
  const chunkSize = options.chunkSize ?? 1000;
  if (!(Number.isInteger(draws) && draws >= 1)) throw new Error(`draws must be a positive integer, got ${draws}`);
  if (!(horizon > 0)) throw new Error(`horizon must be positive, got ${horizon}`);
  for (const c of levels) {
    if (!(c > 0 && c < 1)) throw new Error(`confidence levels must lie in (0, 1), got ${c}`);
    if (draws - Math.ceil(draws * c - 1e-9) < 1) throw new Error(`${draws} draws are too few for a ${c} tail: raise draws`);
  }
  portfolios.forEach((w, p) => assertWeights(model, w, `portfolio ${p} weights`));
  const n = model.assets;
  const means = portfolios.map((w) => {
    let m = 0;
    for (let i = 0; i < n; i++) m += w[i] * model.mean[i];
    return m;
  });
  const returns = portfolios.map(() => new Float64Array(draws));
  const rng = createRandom(options.seed);
  if ((options.method ?? 'portfolio') === 'portfolio') {
    simulatePortfolioReturns(model, portfolios, means, rng, returns);
  } else {
    for (let start = 0; start < draws; start += chunkSize) {
      const rows = Math.min(chunkSize, draws - start);
      const panel = sampleReturns(model, { observations: rows, random: rng });
      for (let p = 0; p < portfolios.length; p++) {
        const w = portfolios[p];
        const out = returns[p];
        for (let r = 0; r < rows; r++) {
          let s = 0;
          const base = r * n;
          for (let i = 0; i < n; i++) s += w[i] * panel.values[base + i];
          out[start + r] = s;
        }
      }
    }
  }
  const rootH = Math.sqrt(horizon);
  return portfolios.map((_, p) => {
    const m = means[p];
    const drift = options.includeMean ? m * horizon : 0;
    const one = returns[p];
    let ss = 0;
    let mean = 0;
    for (let j = 0; j < draws; j++) mean += one[j];
    mean /= draws;
    for (let j = 0; j < draws; j++) ss += (one[j] - mean) ** 2;
    const losses = new Float64Array(draws);
    for (let j = 0; j < draws; j++) losses[j] = -(drift + rootH * (one[j] - m));
    losses.sort();
    return {
      draws,
      seed: options.seed,
      simulatedVolatility: draws > 1 ? Math.sqrt(ss / (draws - 1)) : 0,
      levels: levels.map((c) => {
        const m1 = Math.ceil(draws * c - 1e-9); // 1-based index of the α-quantile
        let tail = 0;
        for (let j = m1; j < draws; j++) tail += losses[j];
        return { confidence: c, horizon, valueAtRisk: losses[m1 - 1], expectedShortfall: tail / (draws - m1) };
      }),
    };
  });
}

/**
 * Joint draws of P portfolio returns r = Pᵀx from the generative model without drawing N-vectors.
 * Factor model: r_p = m_p + (Wᵀw_p)ᵀz + u_p with z ~ N(0, I_L) and u = Pᵀε ~ N(0, PᵀΨP) (a linear map of a
 * Gaussian is Gaussian), so the factor draws keep their role; dense model: r ~ N(m, PᵀΣP).
 */
function simulatePortfolioReturns(
  model: CovarianceModel,
  portfolios: readonly ArrayLike<number>[],
  means: number[],
  rng: Random,
  out: Float64Array[],
): void {
  const count = portfolios.length;
  const n = model.assets;
  const draws = out[0]?.length ?? 0;
  // Covariance of the non-factor part across portfolios (P × P).
  const joint = new Float64Array(count * count);
  let exposures: Float64Array[] = [];
  if (model.kind === 'factor') {
    exposures = portfolios.map((w) => loadingsTransposeTimes(model, w));
    for (let p = 0; p < count; p++) {
      for (let q = 0; q <= p; q++) {
        let s = 0;
        for (let i = 0; i < n; i++) s += model.specificVariance[i] * portfolios[p][i] * portfolios[q][i];
        joint[p * count + q] = s;
        joint[q * count + p] = s;
      }
    }
  } else {
    const sigmaW = portfolios.map((w) => covarianceTimes(model, w));
    for (let p = 0; p < count; p++) {
      for (let q = 0; q <= p; q++) {
        let s = 0;
        for (let i = 0; i < n; i++) s += portfolios[p][i] * sigmaW[q][i];
        joint[p * count + q] = s;
        joint[q * count + p] = s;
      }
    }
  }
  const c = semidefiniteCholesky(joint, count);
  const l = model.kind === 'factor' ? model.factors : 0;
  const z = new Float64Array(l);
  const e = new Float64Array(count);
  for (let d = 0; d < draws; d++) {
    rng.fillNormal(z);
    rng.fillNormal(e);
    for (let p = 0; p < count; p++) {
      let r = means[p];
      const y = exposures[p];
      for (let k = 0; k < l; k++) r += y[k] * z[k];
      const row = p * count;
      for (let q = 0; q <= p; q++) r += c[row + q] * e[q];
      out[p][d] = r;
    }
  }
}
