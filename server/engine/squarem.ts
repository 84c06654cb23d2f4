/**
 * SQUAREM acceleration of a monotone fixed-point (EM) map (Varadhan & Roland 2008, "Simple and globally convergent
 * methods for accelerating the convergence of any EM algorithm", Scand. J. Statist. 35; scheme S3 with the
 * step-length safeguards of their SQUAREM package: α ∈ [1, step_max], step_max × 4 after a full step is accepted,
 * fallback to the plain double EM step when the extrapolated point lowers the likelihood).
 * Each cycle: θ1 = F(θ0), θ2 = F(θ1), r = θ1 − θ0, v = θ2 − 2θ1 + θ0, α = ‖r‖/‖v‖,
 * θ' = θ0 + 2α r + α² v, then a stabilising EM step from θ'.
 */
import type { FitControl } from './types';

export interface EmStep {
  /** F(θ). */
  next: Float64Array;
  /** ℓ(θ) — the log-likelihood at the input. */
  logLikelihood: number;
  /** Largest relative change of the parameters that decide convergence, |F(θ) − θ| / |θ|. */
  maxRelativeChange: number;
}

export interface SquaremOptions {
  tolerance: number;
  parameterTolerance: number;
  maxEvaluations: number;
  accelerate: boolean;
  /** Keeps an extrapolated point feasible (e.g. floors variances). */
  project: (theta: Float64Array) => void;
  stage: string;
}

export interface SquaremResult {
  theta: Float64Array;
  logLikelihood: number;
  trace: number[];
  iterations: number;
  evaluations: number;
  converged: boolean;
}

export function squarem(start: Float64Array, step: (theta: Float64Array) => EmStep, options: SquaremOptions, control: FitControl = {}): SquaremResult {
  let theta = start;
  let evaluations = 0;
  const evaluate = (x: Float64Array) => {
    evaluations++;
    return step(x);
  };
  const trace: number[] = [];
  let iterations = 0;
  let converged = false;
  let stepMax = 1;
  let previous = -Infinity;
  let last = -Infinity;
  const size = start.length;
  const report = (ll: number) => control.onProgress?.({ stage: options.stage, iteration: iterations, logLikelihood: ll });
  while (evaluations < options.maxEvaluations) {
    const first = evaluate(theta);
    const ll0 = first.logLikelihood;
    if (!Number.isFinite(ll0)) throw new Error(`${options.stage} diverged (non-finite log-likelihood)`);
    trace.push(ll0);
    last = ll0;
    iterations++;
    if (ll0 - previous <= options.tolerance * Math.abs(ll0) && first.maxRelativeChange < options.parameterTolerance) {
      converged = true;
      break;
    }
    previous = ll0;
    if (iterations % 5 === 0) report(ll0);
    if (!options.accelerate) {
      theta = first.next;
      continue;
    }
    const theta1 = first.next;
    const second = evaluate(theta1);
    const theta2 = second.next;
    let rr = 0;
    let vv = 0;
    for (let j = 0; j < size; j++) {
      const r = theta1[j] - theta[j];
      const v = theta2[j] - 2 * theta1[j] + theta[j];
      rr += r * r;
      vv += v * v;
    }
    const alpha = Math.min(stepMax, Math.max(1, vv > 0 ? Math.sqrt(rr / vv) : 1));
    const proposal = new Float64Array(size);
    for (let j = 0; j < size; j++) {
      const r = theta1[j] - theta[j];
      const v = theta2[j] - 2 * theta1[j] + theta[j];
      proposal[j] = theta[j] + 2 * alpha * r + alpha * alpha * v;
    }
    options.project(proposal);
    let third: EmStep | null = null;
    try {
      third = evaluate(proposal);
    } catch {
      third = null; // e.g. a wild extrapolation made a matrix indefinite
    }
    if (third && Number.isFinite(third.logLikelihood) && third.logLikelihood >= second.logLikelihood) {
      theta = third.next;
      if (alpha === stepMax) stepMax *= 4;
    } else {
      theta = theta2;
      stepMax = Math.max(1, stepMax / 4);
    }
  }
  report(last);
  return { theta, logLikelihood: last, trace, iterations, evaluations, converged };
}
