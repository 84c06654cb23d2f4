import { describe, expect, it } from 'vitest';
import { fitPpca, topSpectrum } from './ppca';
import { plantedPanel } from './planted';
import { buildScatter, denseScatter } from './scatter';
import { symmetricEigen } from './linalg/eigen';
import { createRandom } from './random';

describe('probabilistic PCA', () => {
  it('Gram (T × T) and covariance (N × N) routes give the same spectrum (Connor & Korajczyk 1986)', () => {
    const p = plantedPanel({ assets: 150, observations: 60, factors: 4, seed: 2 });
    const viaGram = topSpectrum(buildScatter(p.panel, { form: 'data' }), 6);
    const viaCov = topSpectrum(buildScatter(p.panel, { form: 'dense' }), 6);
    expect(viaGram.via).toBe('gram');
    for (let k = 0; k < 6; k++) expect(Math.abs(viaGram.values[k] - viaCov.values[k]) / viaCov.values[0]).toBeLessThan(1e-12);
  });

  it('directions tend to the principal components as σ² → 0 (Tipping & Bishop 1999, §3.3)', () => {
    // rank-3 signal plus noise of shrinking size: W's column space approaches the top-3 eigenvectors of S,
    // and W W' + σ² I approaches the rank-3 PCA reconstruction U Λ Uᵀ.
    const n = 25;
    const t = 200;
    const rng = createRandom(5);
    const b = rng.fillNormal(new Float64Array(n * 3));
    const f = rng.fillNormal(new Float64Array(t * 3));
    const e = rng.fillNormal(new Float64Array(t * n));
    let previousGap = Infinity;
    for (const noise of [1e-1, 1e-3, 1e-5]) {
      const values = new Float64Array(t * n);
      for (let r = 0; r < t; r++) for (let i = 0; i < n; i++) {
        let x = noise * e[r * n + i];
        for (let k = 0; k < 3; k++) x += b[i * 3 + k] * f[r * 3 + k];
        values[r * n + i] = x;
      }
      const scatter = buildScatter({ values, observations: t, assets: n });
      const ppca = fitPpca(scatter, 3);
      const full = symmetricEigen(denseScatter(scatter), n);
      // projector distance between span(W) and span(U_3)
      const proj = (m: Float64Array, cols: number, stride: number) => {
        // orthonormalise columns then P = Q Qᵀ
        const q = new Float64Array(n * cols);
        for (let j = 0; j < cols; j++) {
          for (let i = 0; i < n; i++) q[i * cols + j] = m[i * stride + j];
          for (let k = 0; k < j; k++) {
            let d = 0;
            for (let i = 0; i < n; i++) d += q[i * cols + j] * q[i * cols + k];
            for (let i = 0; i < n; i++) q[i * cols + j] -= d * q[i * cols + k];
          }
          let s = 0;
          for (let i = 0; i < n; i++) s += q[i * cols + j] ** 2;
          for (let i = 0; i < n; i++) q[i * cols + j] /= Math.sqrt(s);
        }
        const pm = new Float64Array(n * n);
        for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) for (let k = 0; k < cols; k++) pm[i * n + j] += q[i * cols + k] * q[j * cols + k];
        return pm;
      };
      const pw = proj(ppca.loadings, 3, 3);
      const pu = proj(full.vectors, 3, n);
      let gap = 0;
      for (let k = 0; k < n * n; k++) gap = Math.max(gap, Math.abs(pw[k] - pu[k]));
      expect(gap).toBeLessThan(1e-8);
      expect(ppca.noiseVariance).toBeLessThan(noise * noise * 1.5);
      expect(ppca.noiseVariance).toBeLessThanOrEqual(previousGap);
      previousGap = ppca.noiseVariance;
    }
  });
});
