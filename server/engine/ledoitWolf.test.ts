import { describe, expect, it } from 'vitest';
import { ledoitWolf } from './ledoitWolf';
import { plantedPanel } from './planted';

describe('Ledoit–Wolf shrinkage (Ledoit & Wolf 2004)', () => {
  it('keeps the trace, shrinks more with fewer dates, and stays positive definite when T < N', () => {
    const big = plantedPanel({ assets: 40, observations: 1000, factors: 3, seed: 2 });
    const small = plantedPanel({ assets: 40, observations: 30, factors: 3, seed: 2 });
    const a = ledoitWolf(big.panel);
    const b = ledoitWolf(small.panel);
    expect(b.shrinkage).toBeGreaterThan(a.shrinkage);
    let tr = 0;
    for (let i = 0; i < 40; i++) tr += b.covariance[i * 40 + i];
    expect(tr / 40).toBeCloseTo(b.target, 14);
    // smallest eigenvalue ≥ δ μ > 0 because S is PSD
    expect(b.shrinkage * b.target).toBeGreaterThan(0);
  });
});
