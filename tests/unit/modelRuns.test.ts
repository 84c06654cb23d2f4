import { describe, expect, it } from 'vitest';
import { createHash } from 'node:crypto';
import { decodeDoubles, encodeDoubles, panelSha256 } from '../../server/services/modelStore';
import { computeModelRun } from '../../server/worker/fitCompute';
import { marchenkoPasturEdge as marchenkoPastur } from '../../server/engine/factorCount';
import { sampleCovariance } from '../../server/engine/sampleCovariance';
import { symmetricEigen } from '../../server/engine/linalg/eigen';
import { plantedPanel } from '../../server/engine/planted';
import { ModelRunParametersSchema } from '../../shared/schemas/modelRuns';

describe('stored arrays', () => {
  it('round-trip every double exactly, NaN and signed zero included', () => {
    const values = Float64Array.from([0, -0, 1e-310, -1.5, Math.PI, Number.MAX_VALUE, NaN, Infinity, -Infinity]);
    const back = decodeDoubles(encodeDoubles(values));
    expect(back.length).toBe(values.length);
    for (let i = 0; i < values.length; i++) expect(Object.is(back[i], values[i])).toBe(true);
  });

  it('decodes from an unaligned buffer (as pg hands them out)', () => {
    const bytes = Buffer.alloc(8 * 3 + 1);
    encodeDoubles(Float64Array.from([1, 2, 3])).copy(bytes, 1);
    expect(Array.from(decodeDoubles(bytes.subarray(1)))).toEqual([1, 2, 3]);
  });

  it('fingerprints the little-endian bytes of the values (a SHA-256 anyone can recompute)', () => {
    const values = Float64Array.from([0.01, NaN, -0.02]);
    const manual = Buffer.alloc(24);
    values.forEach((v, i) => manual.writeDoubleLE(v, i * 8));
    expect(panelSha256(values)).toBe(createHash('sha256').update(manual).digest('hex'));
  });
});

describe('the run computation', () => {
  it('Marchenko–Pastur edge: pure noise of variance σ² gives σ²(1 + √(N/T))² (Marchenko & Pastur 1967)', () => {
    // All eigenvalues below the edge: the bulk variance is tr S / N.
    const { edge, bulkVariance } = marchenkoPastur([1.2, 1.1, 1.0], 100, 100, 400);
    expect(bulkVariance).toBe(1);
    expect(edge).toBeCloseTo((1 + Math.sqrt(100 / 400)) ** 2, 14);
  });

  it('fits with missing values by EM and reads the spectrum from the pairwise-complete covariance over every date, saying so', () => {
    const planted = plantedPanel({ assets: 20, observations: 200, factors: 2, seed: 5, missingShare: 0.02 });
    const parameters = ModelRunParametersSchema.parse({ universe: { kind: 'all' }, window: { kind: 'last', observations: 200 }, estimator: 'fa', factors: 2 });
    const fit = computeModelRun(planted.panel, parameters);
    expect(fit.model.kind).toBe('factor');
    expect(fit.diagnostics.missingMethod).toBe('EM over the observed entries');
    expect(fit.diagnostics.missingEntries).toBe(planted.hiddenEntries);
    expect(fit.diagnostics.eigenvalues!.length).toBe(20);
    expect(String(fit.diagnostics.spectrumSource)).toMatch(/pairwise-complete sample covariance over all 200 dates/);
    // The same eigenvalues as a full decomposition of that (unrepaired) pairwise matrix.
    const pairwise = sampleCovariance(planted.panel, { mean: 'sample', divisor: 'ml', repair: false });
    expect(pairwise.repairedToPsd).toBe(false);
    const full = symmetricEigen(pairwise.covariance, 20).values;
    fit.diagnostics.eigenvalues!.forEach((v, k) => expect(Math.abs(v - Math.max(full[k], 0))).toBeLessThan(1e-9 * full[0]));
    expect(fit.factorScores).toHaveLength(200 * 2);
    expect(fit.diagnostics.explainedShare).toBeGreaterThan(0);
    expect(fit.diagnostics.explainedShare).toBeLessThan(1);
  });

  it('reports progress and stops when the progress callback throws (cancellation)', () => {
    const planted = plantedPanel({ assets: 60, observations: 150, factors: 3, seed: 6 });
    const parameters = ModelRunParametersSchema.parse({ universe: { kind: 'all' }, window: { kind: 'last', observations: 150 }, estimator: 'fa', factors: 3 });
    const stages: string[] = [];
    expect(() =>
      computeModelRun(planted.panel, parameters, (p) => {
        stages.push(p.stage);
        if (p.stage === 'factor-analysis' && p.iteration >= 2) throw new Error('cancelled');
      }),
    ).toThrow('cancelled');
    expect(stages[0]).toBe('fit');
    expect(stages).toContain('factor-analysis');
  });
});
