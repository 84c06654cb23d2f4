/**
 * Maximum-likelihood factor analysis, Σ = W Wᵀ + diag(Ψ), to the maximum of the Gaussian likelihood.
 *
 * Default algorithm ('profile'): Jöreskog's (1967) iteration over Ψ with the loadings profiled out exactly at every
 * step, accelerated by SQUAREM — see faProfile.ts. It starts from Ψ = diag(S)/2 (or a given warm start).
 *
 * Alternative ('em'): EM (Rubin & Thayer 1982, "EM algorithms for ML factor analysis", Psychometrika 47)
 * accelerated with SQUAREM (Varadhan & Roland 2008, "Simple and globally convergent methods for accelerating the
 * convergence of any EM algorithm", Scand. J. Statist. 35, scheme S3 with the monotone safeguard), started from
 * the closed-form PPCA fit; used to cross-check the default and as the basis of the missing-data fit (missing.ts).
 *
 * One EM step from (W, Ψ) needs S applied to the thin block B = Ψ⁻¹W once, and O(N L²) more:
 *   M = I + Wᵀ Ψ⁻¹ W,  E[zzᵀ] = M⁻¹ + M⁻¹ Bᵀ S B M⁻¹,  C = S B M⁻¹,
 *   W' = C E[zzᵀ]⁻¹,  Ψ'ᵢ = Sᵢᵢ − (W' Cᵀ)ᵢᵢ  (floored).
 * The same pieces give the log-likelihood at (W, Ψ) for free (Woodbury, logLikelihood.ts).
 * Heywood cases: Ψᵢ held at its floor (default 0.005 · Sᵢᵢ, the lower bound R's factanal uses on the correlation
 * scale) are flagged per asset. Deterministic: fixed operation order, seeded Krylov starts, and the worker pool
 * returns bit-identical products.
 */
import { cholesky, choleskyLogDet } from './linalg/cholesky';
import { symmetricEigen } from './linalg/eigen';
import { multiplyABt } from './linalg/dense';
import { invertFromCholesky, LOG_2PI, woodburyPieces } from './logLikelihood';
import { canonicalLoadings } from './orientation';
import { fitPpca } from './ppca';
import type { Scatter } from './scatter';
import { squarem } from './squarem';
import { fitProfileFactorAnalysis } from './faProfile';
import type { FitControl } from './types';

export interface FactorAnalysisOptions {
  /** Stop when a SQUAREM cycle raises the log-likelihood by less than tolerance · |ℓ| (default 1e-12)… */
  tolerance?: number;
  /** …and the largest relative change of any Ψᵢ in an EM step is below this (default 1e-7). Looser values
   * (1e-11, 1e-5) cut evaluations by about a third on the benchmark panels and stop within about 1e-3 nats
   * (1e-9 relative) of the optimum, but then R factanal's optimum can be better in the 8th digit. */
  parameterTolerance?: number;
  /** Budget in step evaluations (EM steps, or profile steps = one top-L eigensolve each; default 20000). */
  maxEvaluations?: number;
  /** Ψᵢ ≥ floorShare · Sᵢᵢ (default 0.005). */
  floorShare?: number;
  /** Warm start (e.g. a previous window's fit); defaults to PPCA. */
  start?: { loadings: Float64Array; specificVariance: Float64Array };
  /** Plain EM without acceleration (for validation). */
  accelerate?: boolean;
  /** 'profile' (default: Jöreskog's profile iteration over Ψ with exact loadings, faProfile.ts) or 'em'. */
  algorithm?: 'profile' | 'em';
  /** Parameter-expanded EM steps (Liu, Rubin & Wu 1998; default false: with SQUAREM it saved under 5 % here). */
  parameterExpanded?: boolean;
}

export interface FactorAnalysisResult {
  loadings: Float64Array; // N × L, canonical orientation
  specificVariance: Float64Array;
  logLikelihood: number;
  /** Log-likelihood after each SQUAREM cycle (or EM step when not accelerated). */
  trace: number[];
  iterations: number; // SQUAREM cycles (or EM steps)
  evaluations: number; // EM-step evaluations (each one application of S)
  converged: boolean;
  heywood: boolean[];
}

interface StepResult {
  next: Float64Array;
  logLikelihood: number;
  maxRelativePsiChange: number;
}

export function fitFactorAnalysis(scatter: Scatter, l: number, options: FactorAnalysisOptions = {}, control: FitControl = {}): FactorAnalysisResult {
  const n = scatter.size;
  const t = scatter.observations;
  if (!(Number.isInteger(l) && l >= 0 && l < n)) throw new Error(`number of factors must be an integer in [0, ${n - 1}], got ${l}`);
  const floorShare = options.floorShare ?? 0.005;
  const floor = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    if (!(scatter.diagonal[i] > 0)) throw new Error(`asset ${i + 1} has zero variance: factor analysis needs every asset to vary`);
    floor[i] = floorShare * scatter.diagonal[i];
  }
  const heywoodOf = (psi: Float64Array) => Array.from(psi, (p, i) => p <= floor[i] * (1 + 1e-9));

  if (l === 0) {
    // Diagonal model: Ψ = diag(S) exactly.
    const psi = Float64Array.from(scatter.diagonal);
    let logDet = 0;
    for (let i = 0; i < n; i++) logDet += Math.log(psi[i]);
    const ll = -0.5 * t * (n * LOG_2PI + logDet + n);
    return { loadings: new Float64Array(0), specificVariance: psi, logLikelihood: ll, trace: [ll], iterations: 0, evaluations: 0, converged: true, heywood: heywoodOf(psi) };
  }

  const size = n * l + n;
  let theta: Float64Array = new Float64Array(size);
  if (options.start) {
    theta.set(options.start.loadings, 0);
    theta.set(options.start.specificVariance, n * l);
  } else if ((options.algorithm ?? 'profile') === 'em') {
    const ppca = fitPpca(scatter, l, l, { tolerance: 1e-6, direct: true });
    theta.set(ppca.loadings, 0);
    theta.fill(ppca.noiseVariance, n * l);
  }
  for (let i = 0; i < n; i++) theta[n * l + i] = Math.max(theta[n * l + i], floor[i]);

  if ((options.algorithm ?? 'profile') === 'profile') {
    const startPsi = theta.slice(n * l);
    // Without a warm start, begin at Ψ = diag(S)/2 (half of each variance specific): on the reference panels this
    // reached scikit-learn's optimum where the PPCA start led the fixed point to a lower local maximum (T < N).
    if (!options.start) for (let i = 0; i < n; i++) startPsi[i] = Math.max(0.5 * scatter.diagonal[i], floor[i]);
    const prof = fitProfileFactorAnalysis(
      scatter,
      l,
      startPsi,
      floor,
      { tolerance: options.tolerance ?? 1e-12, parameterTolerance: options.parameterTolerance ?? 1e-7, maxEvaluations: Math.min(options.maxEvaluations ?? 20000, 500), accelerate: options.accelerate },
      control,
    );
    if (!prof.converged && (options.maxEvaluations ?? 20000) > prof.evaluations) {
      // Safeguard: should the inexact eigensolves stall the profile iteration, finish with monotone EM + SQUAREM
      // from where it stopped.
      const em = fitFactorAnalysis(
        scatter,
        l,
        { ...options, algorithm: 'em', start: { loadings: prof.loadings, specificVariance: prof.specificVariance }, maxEvaluations: (options.maxEvaluations ?? 20000) - prof.evaluations },
        control,
      );
      return { ...em, trace: [...prof.trace, ...em.trace], iterations: prof.iterations + em.iterations, evaluations: prof.evaluations + em.evaluations };
    }
    return {
      loadings: canonicalLoadings(prof.loadings, prof.specificVariance, n, l),
      specificVariance: prof.specificVariance,
      logLikelihood: prof.logLikelihood,
      trace: prof.trace,
      iterations: prof.iterations,
      evaluations: prof.evaluations,
      converged: prof.converged,
      heywood: heywoodOf(prof.specificVariance),
    };
  }
  const parameterExpanded = options.parameterExpanded ?? false;
  const emStep = (params: Float64Array): StepResult => {
    // (params may be a subarray view: read only)
    const w = params.subarray(0, n * l);
    const psi = params.subarray(n * l);
    const { bt, m } = woodburyPieces(w, psi, n, l);
    const sbt = scatter.apply(bt, l); // (S B)ᵀ, L × N
    const q = multiplyABt(bt, l, n, sbt, l); // Bᵀ S B
    const cholM = cholesky(m, l);
    const minv = invertFromCholesky(cholM, l);
    let logDet = choleskyLogDet(cholM, l);
    let trPsiS = 0;
    for (let i = 0; i < n; i++) {
      logDet += Math.log(psi[i]);
      trPsiS += scatter.diagonal[i] / psi[i];
    }
    let trCorr = 0;
    for (let a = 0; a < l; a++) for (let b = 0; b < l; b++) trCorr += minv[a * l + b] * q[b * l + a];
    const logLikelihood = -0.5 * t * (n * LOG_2PI + logDet + trPsiS - trCorr);
    // E[zzᵀ] = M⁻¹ + M⁻¹ Q M⁻¹
    const qm = new Float64Array(l * l);
    for (let a = 0; a < l; a++) for (let b = 0; b < l; b++) {
      let s = 0;
      for (let c = 0; c < l; c++) s += q[a * l + c] * minv[c * l + b];
      qm[a * l + b] = s;
    }
    const ezz = new Float64Array(l * l);
    for (let a = 0; a < l; a++) for (let b = 0; b < l; b++) {
      let s = minv[a * l + b];
      for (let c = 0; c < l; c++) s += minv[a * l + c] * qm[c * l + b];
      ezz[a * l + b] = s;
    }
    for (let a = 0; a < l; a++) for (let b = 0; b < a; b++) {
      const v = 0.5 * (ezz[a * l + b] + ezz[b * l + a]);
      ezz[a * l + b] = v;
      ezz[b * l + a] = v;
    }
    const ezzInv = invertFromCholesky(cholesky(ezz, l), l);
    // PX-EM (Liu, Rubin & Wu 1998, §5): also fit the latent covariance Σ_z = E[zzᵀ] in the expanded model and reduce
    // W = W* Σ_z^{1/2}; the symmetric square root keeps W from rotating between steps (which SQUAREM would mistake
    // for movement). Same Ψ update; monotone like EM.
    let post: Float64Array | null = null;
    if (parameterExpanded) {
      const { values, vectors } = symmetricEigen(ezz, l);
      post = new Float64Array(l * l);
      for (let a = 0; a < l; a++) for (let b = 0; b < l; b++) {
        let sum = 0;
        for (let c2 = 0; c2 < l; c2++) sum += vectors[a * l + c2] * Math.sqrt(Math.max(values[c2], 0)) * vectors[b * l + c2];
        post[a * l + b] = sum;
      }
    }
    // C = S B M⁻¹ (N × L);  W' = C E[zzᵀ]⁻¹;  Ψ' = diag(S) − rowsum(W' ∘ C)
    const next = new Float64Array(size);
    const c = new Float64Array(l);
    let maxChange = 0;
    for (let i = 0; i < n; i++) {
      for (let k = 0; k < l; k++) {
        let s = 0;
        for (let a = 0; a < l; a++) s += sbt[a * n + i] * minv[a * l + k];
        c[k] = s;
      }
      let explained = 0;
      for (let k = 0; k < l; k++) {
        let s = 0;
        for (let a = 0; a < l; a++) s += c[a] * ezzInv[a * l + k];
        next[i * l + k] = s;
        explained += s * c[k];
      }
      if (post) {
        const row = next.slice(i * l, i * l + l);
        for (let k = 0; k < l; k++) {
          let sum = 0;
          for (let a = 0; a < l; a++) sum += row[a] * post[a * l + k];
          next[i * l + k] = sum;
        }
      }
      const p = Math.max(scatter.diagonal[i] - explained, floor[i]);
      next[n * l + i] = p;
      maxChange = Math.max(maxChange, Math.abs(p - psi[i]) / psi[i]);
    }
    return { next, logLikelihood, maxRelativePsiChange: maxChange };
  };

  const result = squarem(
    theta,
    (x) => {
      const r = emStep(x);
      return { next: r.next, logLikelihood: r.logLikelihood, maxRelativeChange: r.maxRelativePsiChange };
    },
    {
      tolerance: options.tolerance ?? 1e-12,
      parameterTolerance: options.parameterTolerance ?? 1e-7,
      maxEvaluations: options.maxEvaluations ?? 20000,
      accelerate: options.accelerate ?? true,
      project: (x) => {
        for (let i = 0; i < n; i++) x[n * l + i] = Math.max(x[n * l + i], floor[i]);
      },
      stage: 'factor-analysis',
    },
    control,
  );
  theta = result.theta;
  const { trace, iterations, converged, logLikelihood: lastLl } = result;
  const w = theta.subarray(0, n * l);
  const psi = Float64Array.from(theta.subarray(n * l));
  return {
    loadings: canonicalLoadings(w, psi, n, l),
    specificVariance: psi,
    logLikelihood: lastLl,
    trace,
    iterations,
    evaluations: result.evaluations,
    converged,
    heywood: heywoodOf(psi),
  };
}
