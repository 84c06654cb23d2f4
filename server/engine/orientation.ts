/**
 * Canonical orientation of factor loadings. The likelihood of Σ = W Wᵀ + Ψ is unchanged by W → W R for any
 * orthogonal R, so a fit is only defined up to rotation. We fix one representative so reruns and versions compare:
 *  1. rotate so that Wᵀ Ψ⁻¹ W is diagonal (the Lawley–Maxwell identification condition, Lawley & Maxwell 1971 §2.3;
 *     for PPCA, Ψ = σ²I, these are the principal directions);
 *  2. order columns by decreasing explained variance Σᵢ Wᵢₖ²;
 *  3. flip each column's sign so its largest-magnitude loading is positive (ties: the first asset).
 * When Wᵀ Ψ⁻¹ W has repeated eigenvalues the rotation within that eigenspace stays arbitrary (rare in practice).
 */
import { symmetricEigen } from './linalg/eigen';
import type { FactorModel } from './types';

/** Returns W (N × L, row-major) in canonical orientation. */
export function canonicalLoadings(w: Float64Array, psi: Float64Array, n: number, l: number): Float64Array {
  if (l === 0) return new Float64Array(0);
  const g = new Float64Array(l * l);
  for (let i = 0; i < n; i++) {
    const inv = 1 / psi[i];
    for (let a = 0; a < l; a++) {
      const wa = w[i * l + a] * inv;
      for (let b = 0; b <= a; b++) g[a * l + b] += wa * w[i * l + b];
    }
  }
  for (let a = 0; a < l; a++) for (let b = 0; b < a; b++) g[b * l + a] = g[a * l + b];
  const { vectors: r } = symmetricEigen(g, l);
  const rotated = new Float64Array(n * l);
  for (let i = 0; i < n; i++) {
    for (let k = 0; k < l; k++) {
      let s = 0;
      for (let a = 0; a < l; a++) s += w[i * l + a] * r[a * l + k];
      rotated[i * l + k] = s;
    }
  }
  const variance = new Float64Array(l);
  for (let i = 0; i < n; i++) for (let k = 0; k < l; k++) variance[k] += rotated[i * l + k] ** 2;
  const order = Array.from({ length: l }, (_, k) => k).sort((a, b) => variance[b] - variance[a] || a - b);
  const out = new Float64Array(n * l);
  order.forEach((src, dst) => {
    let best = 0;
    let bestAbs = -1;
    for (let i = 0; i < n; i++) {
      const v = Math.abs(rotated[i * l + src]);
      if (v > bestAbs) {
        bestAbs = v;
        best = i;
      }
    }
    const sign = rotated[best * l + src] < 0 ? -1 : 1;
    for (let i = 0; i < n; i++) out[i * l + dst] = sign * rotated[i * l + src];
  });
  return out;
}

/** A copy of the model with its loadings in canonical orientation. */
export function orientFactorModel(model: FactorModel): FactorModel {
  return { ...model, loadings: canonicalLoadings(model.loadings, model.specificVariance, model.assets, model.factors) };
}
