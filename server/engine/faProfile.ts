/**
 * Maximum-likelihood factor analysis by iterating on the uniquenesses with the loadings profiled out
 * (Jöreskog 1967, "Some contributions to maximum likelihood factor analysis", Psychometrika 32; the same fixed point
 * scikit-learn's FactorAnalysis iterates). For given Ψ the optimal loadings are
 *   W(Ψ) = Ψ^{1/2} U_L (Λ_L − I)_+^{1/2},  U_L, Λ_L the top-L eigenpairs of S* = Ψ^{-1/2} S Ψ^{-1/2},
 * and the profile log-likelihood needs only those eigenvalues (derivation from the Woodbury form):
 *   ℓ(Ψ) = −(T/2) [N log 2π + Σᵢ log Ψᵢ + Σᵢ Sᵢᵢ/Ψᵢ + Σ_{k≤L, λ_k>1} (log λ_k − λ_k + 1)].
 * The map Ψ ← max(diag(S − W(Ψ)W(Ψ)ᵀ), floor) is accelerated by SQUAREM (squarem.ts). Each step solves the top-L
 * eigenproblem by block Lanczos warm-started from the previous step's eigenvectors, so it costs a few applications
 * of S to thin blocks; the slow, flat directions of W (factors near the noise) are solved exactly every step instead
 * of crawling as they do under EM.
 */
import { topEigenpairs, type SymmetricOperator } from './linalg/eigen';
import { LOG_2PI } from './logLikelihood';
import type { Scatter } from './scatter';
import { squarem } from './squarem';
import type { FitControl } from './types';

export interface ProfileFitResult {
  loadings: Float64Array; // not yet canonically oriented
  specificVariance: Float64Array;
  logLikelihood: number;
  trace: number[];
  iterations: number;
  evaluations: number;
  operatorApplications: number;
  converged: boolean;
}

export function fitProfileFactorAnalysis(
  scatter: Scatter,
  l: number,
  startPsi: Float64Array,
  floor: Float64Array,
  options: { tolerance: number; parameterTolerance: number; maxEvaluations: number; eigenTolerance?: number; accelerate?: boolean },
  control: FitControl = {},
): ProfileFitResult {
  const n = scatter.size;
  const t = scatter.observations;
  let warm: Float64Array | undefined;
  let lastChange = Infinity; // adaptive eigen tolerance: loose while Ψ still moves a lot
  let applications = 0;
  const eigTol = options.eigenTolerance ?? 1e-10;
  const kWanted = Math.min(n, l + Math.max(6, l));

  const solve = (psi: Float64Array) => {
    const d = new Float64Array(n);
    for (let i = 0; i < n; i++) d[i] = 1 / Math.sqrt(psi[i]);
    const op: SymmetricOperator = {
      size: n,
      apply: (blockT, k) => {
        const scaled = new Float64Array(k * n);
        for (let r = 0; r < k; r++) for (let i = 0; i < n; i++) scaled[r * n + i] = blockT[r * n + i] * d[i];
        const img = scatter.apply(scaled, k);
        for (let r = 0; r < k; r++) for (let i = 0; i < n; i++) img[r * n + i] *= d[i];
        return img;
      },
    };
    // A guard band of extra pairs (block = L + guard) keeps convergence fast when λ_L sits in the noise bulk.
    const eig = topEigenpairs(op, kWanted, { tolerance: Math.max(eigTol, Math.min(1e-3, 1e-2 * lastChange)), start: warm, startColumns: warm ? kWanted : 0, blockSize: kWanted, basisSize: 6 * kWanted, convergeCount: l, maxRestarts: 200 });
    applications += eig.operatorApplications;
    warm = eig.vectors;
    return eig;
  };

  const loadingsFor = (psi: Float64Array, values: Float64Array, vectors: Float64Array) => {
    const w = new Float64Array(n * l);
    for (let k = 0; k < l; k++) {
      const scale = Math.sqrt(Math.max(values[k] - 1, 0));
      for (let i = 0; i < n; i++) w[i * l + k] = Math.sqrt(psi[i]) * vectors[i * kWanted + k] * scale;
    }
    return w;
  };

  const profileLogLikelihood = (psi: Float64Array, values: Float64Array) => {
    let sum = 0;
    for (let i = 0; i < n; i++) sum += Math.log(psi[i]) + scatter.diagonal[i] / psi[i];
    for (let k = 0; k < l; k++) if (values[k] > 1) sum += Math.log(values[k]) - values[k] + 1;
    return -0.5 * t * (n * LOG_2PI + sum);
  };

  let lastW = new Float64Array(n * l);
  const result = squarem(
    Float64Array.from(startPsi),
    (psi) => {
      const eig = solve(psi);
      const w = loadingsFor(psi, eig.values, eig.vectors);
      lastW = w;
      const next = new Float64Array(n);
      let change = 0;
      for (let i = 0; i < n; i++) {
        let h = 0;
        for (let k = 0; k < l; k++) h += w[i * l + k] * w[i * l + k];
        next[i] = Math.max(scatter.diagonal[i] - h, floor[i]);
        change = Math.max(change, Math.abs(next[i] - psi[i]) / psi[i]);
      }
      lastChange = change;
      return { next, logLikelihood: profileLogLikelihood(psi, eig.values), maxRelativeChange: change };
    },
    {
      tolerance: options.tolerance,
      parameterTolerance: options.parameterTolerance,
      maxEvaluations: options.maxEvaluations,
      accelerate: options.accelerate ?? true,
      project: (psi) => {
        for (let i = 0; i < n; i++) psi[i] = Math.max(psi[i], floor[i]);
      },
      stage: 'factor-analysis',
    },
    control,
  );
  // Loadings at the returned Ψ (the converged step evaluated W at this Ψ's predecessor: solve once more).
  const psi = result.theta;
  const eig = solve(psi);
  lastW = loadingsFor(psi, eig.values, eig.vectors);
  return {
    loadings: lastW,
    specificVariance: Float64Array.from(psi),
    logLikelihood: profileLogLikelihood(psi, eig.values),
    trace: result.trace,
    iterations: result.iterations,
    evaluations: result.evaluations + 1,
    operatorApplications: applications,
    converged: result.converged,
  };
}
