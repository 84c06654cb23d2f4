import { describe, expect, it } from 'vitest';
import { canonicalLoadings } from './orientation';
import { lowRankPlusDiagonal, relativeFrobenius } from './linalg/dense';
import { createRandom } from './random';

describe('canonical orientation', () => {
  it('keeps W Wᵀ, and any rotation or sign flip of W maps to the same canonical loadings', () => {
    const rng = createRandom(12);
    const n = 20;
    const l = 3;
    const w = rng.fillNormal(new Float64Array(n * l));
    const psi = new Float64Array(n).map(() => 0.5 + rng.uniform());
    const c1 = canonicalLoadings(w, psi, n, l);
    expect(relativeFrobenius(lowRankPlusDiagonal(c1, n, l, psi), lowRankPlusDiagonal(w, n, l, psi))).toBeLessThan(1e-13);
    // rotate by a Givens rotation in the (0, 2) plane and flip column 1
    const th = 0.7;
    const r = new Float64Array(n * l);
    for (let i = 0; i < n; i++) {
      r[i * l] = Math.cos(th) * w[i * l] - Math.sin(th) * w[i * l + 2];
      r[i * l + 2] = Math.sin(th) * w[i * l] + Math.cos(th) * w[i * l + 2];
      r[i * l + 1] = -w[i * l + 1];
    }
    const c2 = canonicalLoadings(r, psi, n, l);
    for (let k = 0; k < n * l; k++) expect(c2[k]).toBeCloseTo(c1[k], 10);
  });
});
