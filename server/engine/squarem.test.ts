import { describe, expect, it } from 'vitest';
import { squarem } from './squarem';

describe('SQUAREM (Varadhan & Roland 2008)', () => {
  it('accelerates a slow linear fixed-point iteration to the same fixed point', () => {
    // F(θ) = θ + 0.02 (θ* − θ) componentwise: ascent of ℓ(θ) = −‖θ − θ*‖², converging at rate 0.98 unaccelerated.
    const target = Float64Array.from([1, -2, 3]);
    const step = (theta: Float64Array) => {
      const next = theta.map((x, i) => x + 0.02 * (target[i] - x));
      let ll = 0;
      let change = 0;
      for (let i = 0; i < 3; i++) {
        ll -= (theta[i] - target[i]) ** 2;
        change = Math.max(change, Math.abs(next[i] - theta[i]));
      }
      return { next, logLikelihood: ll, maxRelativeChange: change };
    };
    const options = { tolerance: 0, parameterTolerance: 1e-12, maxEvaluations: 100000, project: () => {}, stage: 'test' };
    const plain = squarem(new Float64Array(3), step, { ...options, accelerate: false });
    const fast = squarem(new Float64Array(3), step, { ...options, accelerate: true });
    expect(plain.converged && fast.converged).toBe(true);
    for (let i = 0; i < 3; i++) expect(fast.theta[i]).toBeCloseTo(target[i], 9);
    expect(fast.evaluations * 10).toBeLessThan(plain.evaluations);
  });
});
