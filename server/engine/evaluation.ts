/**
 * Forecast evaluation for risk-model backtests and minimum-variance weights.
 * Pure functions: per-period forecasts and realised returns in, statistics out.
 */
import type { CovarianceModel } from './types';
import { factorPrecision } from './lowRank';
import { chiSquare1Survival } from './normalDistribution';
import { choleskySolve, tryCholesky } from './linalg/cholesky';
import { confidenceQuantile } from './risk';

function assertSameLength(a: ArrayLike<number>, b: ArrayLike<number>, what: string): void {
  if (a.length !== b.length) throw new Error(`${what}: lengths differ (${a.length} vs ${b.length})`);
  if (a.length === 0) throw new Error(`${what}: no observations`);
}

export interface BiasStatistic {
  /** Sample standard deviation (1/(T−1), mean removed) of the standardised outcomes r_t / σ̂_t. */
  value: number;
  observations: number;
  /** 1 − √(2/T) and 1 + √(2/T): about ±2 standard errors (SE of a sample s.d. ≈ 1/√(2T) under normality). */
  lower: number;
  upper: number;
  withinBand: boolean;
}

/**
 * Bias statistic: the standard deviation of standardised outcomes b_t = r_t / σ̂_t, where σ̂_t is the volatility
 * forecast made before r_t was seen. Near 1 for an accurate forecast; above 1 means risk was under-forecast.
 * The band 1 ± √(2/T) is common practice (two standard errors of a sample standard deviation of T normals).
 */
export function biasStatistic(realisedReturns: ArrayLike<number>, forecastVolatility: ArrayLike<number>): BiasStatistic {
  assertSameLength(realisedReturns, forecastVolatility, 'bias statistic');
  const t = realisedReturns.length;
  if (t < 2) throw new Error('bias statistic: needs at least 2 observations');
  const b = new Float64Array(t);
  let mean = 0;
  for (let i = 0; i < t; i++) {
    const s = forecastVolatility[i];
    if (!(s > 0)) throw new Error(`bias statistic: forecast volatility at period ${i} must be positive, got ${s}`);
    b[i] = realisedReturns[i] / s;
    mean += b[i];
  }
  mean /= t;
  let ss = 0;
  for (let i = 0; i < t; i++) ss += (b[i] - mean) ** 2;
  const value = Math.sqrt(ss / (t - 1));
  const half = Math.sqrt(2 / t);
  return { value, observations: t, lower: 1 - half, upper: 1 + half, withinBand: value >= 1 - half && value <= 1 + half };
}

/**
 * Bias statistic over rolling windows of `window` periods ending at each period from window − 1 on (for a chart of
 * how forecast quality drifts); entries before the first full window are NaN. Same definition and band as biasStatistic.
 */
export function rollingBiasStatistic(realisedReturns: ArrayLike<number>, forecastVolatility: ArrayLike<number>, window: number): Float64Array {
  assertSameLength(realisedReturns, forecastVolatility, 'rolling bias statistic');
  if (!(Number.isInteger(window) && window >= 2)) throw new Error(`rolling bias statistic: window must be an integer ≥ 2, got ${window}`);
  const t = realisedReturns.length;
  const out = new Float64Array(t).fill(NaN);
  for (let end = window; end <= t; end++) {
    const r = Array.prototype.slice.call(realisedReturns, end - window, end) as number[];
    const s = Array.prototype.slice.call(forecastVolatility, end - window, end) as number[];
    out[end - 1] = biasStatistic(r, s).value;
  }
  return out;
}

export interface QlikeLoss {
  /** Mean of ln h_t + r̂²_t / h_t: ranks forecasts the same way as the normalised form (they differ by a term free of h). */
  mean: number;
  /** Mean of r̂²/h − ln(r̂²/h) − 1 (zero for a perfect forecast); null when a proxy is zero (its log is −∞). */
  meanNormalised: number | null;
  observations: number;
}

/**
 * QLIKE loss of variance forecasts h_t against a variance proxy r̂²_t (e.g. the squared realised return):
 * L(r̂², h) = r̂²/h − ln(r̂²/h) − 1, robust to noise in the proxy (Patton 2011, "Volatility forecast comparison using
 * imperfect volatility proxies", J. Econometrics 160, the b = −2 member of his robust loss family; cited from memory).
 */
export function qlikeLoss(forecastVariance: ArrayLike<number>, varianceProxy: ArrayLike<number>): QlikeLoss {
  assertSameLength(forecastVariance, varianceProxy, 'QLIKE');
  const t = forecastVariance.length;
  let sum = 0;
  let sumNormalised = 0;
  let normalisedValid = true;
  for (let i = 0; i < t; i++) {
    const h = forecastVariance[i];
    const p = varianceProxy[i];
    if (!(h > 0)) throw new Error(`QLIKE: forecast variance at period ${i} must be positive, got ${h}`);
    if (!(p >= 0)) throw new Error(`QLIKE: variance proxy at period ${i} must be non-negative, got ${p}`);
    sum += Math.log(h) + p / h;
    if (p > 0) sumNormalised += p / h - Math.log(p / h) - 1;
    else normalisedValid = false;
  }
  return { mean: sum / t, meanNormalised: normalisedValid ? sumNormalised / t : null, observations: t };
}

export interface KupiecTest {
  exceedances: number;
  observations: number;
  /** Expected exceedance rate p = 1 − confidence. */
  expectedRate: number;
  observedRate: number;
  /** Likelihood-ratio statistic, asymptotically χ²(1) under a correct VaR. */
  statistic: number;
  pValue: number;
  /** true when the test rejects at the 5 % level (p-value < 0.05). */
  rejectedAt5Percent: boolean;
}

/**
 * Kupiec (1995) proportion-of-failures test ("Techniques for verifying the accuracy of risk measurement models",
 * J. Derivatives 3(2)): with x exceedances in T periods and p = 1 − α,
 * LR = −2 ln[(1 − p)^{T−x} p^x] + 2 ln[(1 − x/T)^{T−x} (x/T)^x]  ~ χ²(1); 0·ln 0 = 0.
 */
export function kupiecTest(exceedances: number, observations: number, confidence: number): KupiecTest {
  if (!(Number.isInteger(observations) && observations >= 1)) throw new Error(`Kupiec test: observations must be a positive integer, got ${observations}`);
  if (!(Number.isInteger(exceedances) && exceedances >= 0 && exceedances <= observations)) {
    throw new Error(`Kupiec test: exceedances must be an integer in 0…${observations}, got ${exceedances}`);
  }
  if (!(confidence > 0 && confidence < 1)) throw new Error(`Kupiec test: confidence must lie in (0, 1), got ${confidence}`);
  const p = 1 - confidence;
  const x = exceedances;
  const t = observations;
  const xlogy = (a: number, b: number) => (a === 0 ? 0 : a * Math.log(b));
  const observedRate = x / t;
  const logNull = xlogy(t - x, 1 - p) + xlogy(x, p);
  const logAlt = xlogy(t - x, 1 - observedRate) + xlogy(x, observedRate);
  const statistic = Math.max(0, -2 * (logNull - logAlt));
  const pValue = chiSquare1Survival(statistic);
  return { exceedances: x, observations: t, expectedRate: p, observedRate, statistic, pValue, rejectedAt5Percent: pValue < 0.05 };
}

/**
 * Global minimum-variance weights w = Σ⁻¹1 / (1ᵀΣ⁻¹1) (Merton 1972, eq. (12)), fully invested, shorts allowed.
 * Factor models: Σ⁻¹1 by the Woodbury identity in O(N·L²) (see lowRank.ts). Dense models: Cholesky solve;
 * a singular Σ (e.g. a sample covariance with T ≤ N) is reported as an error.
 */
export function minimumVarianceWeights(model: CovarianceModel): Float64Array {
  const n = model.assets;
  const ones = new Float64Array(n).fill(1);
  let x: Float64Array;
  if (model.kind === 'factor') {
    x = factorPrecision(model)(ones);
  } else {
    const chol = tryCholesky(model.covariance, n);
    if (!chol) {
      throw new Error(`the ${model.method} covariance is not positive definite (singular when observations ≤ assets); use shrinkage or a factor model for minimum-variance weights`);
    }
    x = choleskySolve(chol, n, ones, 1);
  }
  let total = 0;
  for (let i = 0; i < n; i++) total += x[i];
  for (let i = 0; i < n; i++) x[i] /= total;
  return x;
}

export interface Window {
  /** First period of the estimation window (inclusive). */
  start: number;
  /** One past the last period of the estimation window; the forecast is evaluated on period `end`. */
  end: number;
}

/**
 * Rolling estimation windows for a backtest: fit on [start, end), forecast period `end`, move by `step`.
 * With `expanding`, every window starts at 0.
 */
export function rollingWindows(totalPeriods: number, windowLength: number, step = 1, expanding = false): Window[] {
  if (!(Number.isInteger(windowLength) && windowLength >= 1)) throw new Error(`window length must be a positive integer, got ${windowLength}`);
  if (!(Number.isInteger(step) && step >= 1)) throw new Error(`step must be a positive integer, got ${step}`);
  const out: Window[] = [];
  for (let end = windowLength; end < totalPeriods; end += step) out.push({ start: expanding ? 0 : end - windowLength, end });
  return out;
}

export interface ForecastEvaluationInput {
  /** Realised portfolio returns r_t. */
  realisedReturns: ArrayLike<number>;
  /** Volatility forecasts σ̂_t made before r_t was seen. */
  forecastVolatility: ArrayLike<number>;
  /** Confidence levels for VaR exceedances (default 0.95 and 0.99). */
  confidenceLevels?: readonly number[];
  /** VaR forecasts per level (positive losses); default z_α σ̂_t (normal, zero mean). */
  valueAtRisk?: Readonly<Record<number, ArrayLike<number>>>;
}

export interface ForecastEvaluation {
  bias: BiasStatistic;
  qlike: QlikeLoss;
  valueAtRisk: (KupiecTest & { confidence: number })[];
}

/** Evaluates per-period forecasts against realised returns: bias statistic, QLIKE on r², VaR exceedances with Kupiec's test. */
export function evaluateForecasts(input: ForecastEvaluationInput): ForecastEvaluation {
  const { realisedReturns: r, forecastVolatility: s } = input;
  assertSameLength(r, s, 'forecast evaluation');
  const t = r.length;
  const variance = new Float64Array(t);
  const proxy = new Float64Array(t);
  for (let i = 0; i < t; i++) {
    variance[i] = s[i] * s[i];
    proxy[i] = r[i] * r[i];
  }
  const levels = input.confidenceLevels ?? [0.95, 0.99];
  const valueAtRisk = levels.map((confidence) => {
    const given = input.valueAtRisk?.[confidence];
    if (given) assertSameLength(r, given, `VaR forecasts at ${confidence}`);
    const z = confidenceQuantile(confidence);
    let exceedances = 0;
    for (let i = 0; i < t; i++) {
      const limit = given ? given[i] : z * s[i];
      if (-r[i] > limit) exceedances++;
    }
    return { ...kupiecTest(exceedances, t, confidence), confidence };
  });
  return { bias: biasStatistic(r, s), qlike: qlikeLoss(variance, proxy), valueAtRisk };
}
