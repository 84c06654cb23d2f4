/**
 * Observation weights in time.
 *
 * Equal weights 1/T, or exponential weights w_t ∝ λ^(T−1−t) with decay λ = 0.5^(1/h) for a half-life of h periods
 * (the weight halves every h periods back from the latest date; common practice in risk models).
 * Weights are normalised to sum to one. Effective sample size: Kish (1965, "Survey Sampling") n_eff = (Σw)² / Σw².
 */
import type { Weighting } from './types';

/** λ = 0.5^(1/h). */
export function decayFactor(halfLife: number): number {
  if (!(halfLife > 0) || !Number.isFinite(halfLife)) throw new Error(`half-life must be a positive number of periods, got ${halfLife}`);
  return Math.pow(0.5, 1 / halfLife);
}

/** Normalised weights (sum 1) for T observations, oldest first. */
export function observationWeights(observations: number, weighting: Weighting = { kind: 'equal' }): Float64Array {
  if (!(Number.isInteger(observations) && observations >= 1)) throw new Error(`observations must be a positive integer, got ${observations}`);
  const w = new Float64Array(observations);
  if (weighting.kind === 'equal') {
    w.fill(1 / observations);
    return w;
  }
  const lambda = decayFactor(weighting.halfLife);
  let sum = 0;
  for (let t = observations - 1, p = 1; t >= 0; t--, p *= lambda) {
    w[t] = p;
    sum += p;
  }
  for (let t = 0; t < observations; t++) w[t] /= sum;
  return w;
}

/** Kish's effective sample size (Σw)² / Σw² (equals T for equal weights). */
export function effectiveSampleSize(weights: ArrayLike<number>): number {
  let s = 0;
  let s2 = 0;
  for (let i = 0; i < weights.length; i++) {
    s += weights[i];
    s2 += weights[i] * weights[i];
  }
  return s2 > 0 ? (s * s) / s2 : 0;
}

export interface WeightingSummary {
  kind: Weighting['kind'];
  halfLife: number | null;
  /** λ (1 for equal weights). */
  decay: number;
  effectiveSampleSize: number;
}

export function describeWeighting(observations: number, weighting: Weighting = { kind: 'equal' }): WeightingSummary {
  const w = observationWeights(observations, weighting);
  return {
    kind: weighting.kind,
    halfLife: weighting.kind === 'exponential' ? weighting.halfLife : null,
    decay: weighting.kind === 'exponential' ? decayFactor(weighting.halfLife) : 1,
    effectiveSampleSize: effectiveSampleSize(w),
  };
}
