import { describe, expect, it } from 'vitest';
import { createRandom } from './random';

describe('createRandom', () => {
  it('is deterministic for a seed and differs across seeds', () => {
    const a = createRandom(42);
    const b = createRandom(42);
    const c = createRandom(43);
    const xa = Array.from({ length: 5 }, () => a.uniform());
    const xb = Array.from({ length: 5 }, () => b.uniform());
    const xc = Array.from({ length: 5 }, () => c.uniform());
    expect(xa).toEqual(xb);
    expect(xa).not.toEqual(xc);
    for (const x of xa) expect(x >= 0 && x < 1).toBe(true);
  });

  it('draws normals and unit-variance Student-t with the right first two moments', () => {
    const rng = createRandom(7);
    const count = 200_000;
    for (const draw of [() => rng.normal(), () => rng.studentT(5)]) {
      let sum = 0;
      let sumSq = 0;
      for (let i = 0; i < count; i++) {
        const x = draw();
        sum += x;
        sumSq += x * x;
      }
      const mean = sum / count;
      // Standard errors: 1/sqrt(count) ≈ 0.0022 for the mean; variance of t5 sample variance is larger.
      expect(Math.abs(mean)).toBeLessThan(0.01);
      expect(Math.abs(sumSq / count - mean * mean - 1)).toBeLessThan(0.03);
    }
  });

  it('gamma sampling has mean equal to its shape', () => {
    const rng = createRandom(11);
    for (const shape of [0.5, 2.5, 10]) {
      let sum = 0;
      for (let i = 0; i < 50_000; i++) sum += rng.gamma(shape);
      expect(Math.abs(sum / 50_000 - shape) / shape).toBeLessThan(0.03);
    }
  });
});
