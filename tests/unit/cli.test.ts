// The engine's command-line tool, run as a separate process on small CSV files in tests/fixtures/cli/.
// Reference figures come from tests/reference/generate_cli.py (numpy.cov, scipy multivariate_normal, scikit-learn
// FactorAnalysis with svd_method='lapack' run to convergence, LedoitWolf, closed-form PPCA σ²).
import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';

const repo = fileURLToPath(new URL('../..', import.meta.url));
const fixtures = 'tests/fixtures/cli';
const reference = JSON.parse(readFileSync(new URL('../reference/fixtures/cli.json', import.meta.url), 'utf8'));

function cli(args: string[]) {
  // `node --import tsx` is what `npm run cli` does through tsx's launcher; spawning node directly keeps the test fast.
  const result = spawnSync(process.execPath, ['--import', 'tsx', 'server/cli/main.ts', ...args], { cwd: repo, encoding: 'utf8' });
  return { status: result.status, stdout: result.stdout, stderr: result.stderr };
}

function fit(args: string[]) {
  const r = cli(['fit', '--returns', `${fixtures}/returns.csv`, ...args]);
  expect(r.stderr).toBe('');
  expect(r.status).toBe(0);
  const lines = r.stdout.trim().split('\n');
  expect(lines.length).toBe(1); // exactly one JSON object
  return JSON.parse(lines[0]);
}

function relativeFrobenius(a: number[], b: number[]): number {
  let num = 0;
  let den = 0;
  for (let k = 0; k < a.length; k++) {
    num += (a[k] - b[k]) ** 2;
    den += b[k] ** 2;
  }
  return Math.sqrt(num / den);
}

function impliedCovariance(loadings: number[][], psi: number[]): number[] {
  const n = psi.length;
  const out: number[] = [];
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      let s = i === j ? psi[i] : 0;
      for (let k = 0; k < loadings[i].length; k++) s += loadings[i][k] * loadings[j][k];
      out.push(s);
    }
  }
  return out;
}

describe('npm run cli -- fit', () => {
  it('fits factor analysis to the optimum scikit-learn reaches, in canonical orientation', () => {
    const out = fit(['--method', 'fa', '--factors', '2']);
    expect(out.method).toBe('fa');
    expect(out.factors).toBe(2);
    expect(out.observations).toBe(120);
    expect(out.assets).toEqual(reference.symbols);
    expect(out.mean.length).toBe(8);
    for (let i = 0; i < 8; i++) expect(out.mean[i]).toBeCloseTo(reference.mean[i], 15);
    expect(out.loadings.length).toBe(8);
    expect(out.loadings.every((row: number[]) => row.length === 2)).toBe(true);
    expect(out.specificVariance.length).toBe(8);
    expect(typeof out.iterations).toBe('number');
    expect(out.converged).toBe(true);
    // Log-likelihood at least the converged reference's minus 1e-6 relative; W Wᵀ + Ψ within 1e-4 relative Frobenius.
    expect(out.logLikelihood).toBeGreaterThanOrEqual(reference.faLogLikelihood - 1e-6 * Math.abs(reference.faLogLikelihood));
    expect(relativeFrobenius(impliedCovariance(out.loadings, out.specificVariance), reference.faCovariance)).toBeLessThan(1e-4);
    // Canonical orientation: WᵀΨ⁻¹W diagonal with decreasing entries, each column's largest-magnitude loading positive.
    const g = [0, 0, 0];
    out.loadings.forEach((row: number[], i: number) => {
      g[0] += (row[0] * row[0]) / out.specificVariance[i];
      g[1] += (row[0] * row[1]) / out.specificVariance[i];
      g[2] += (row[1] * row[1]) / out.specificVariance[i];
    });
    expect(Math.abs(g[1])).toBeLessThan(1e-8 * g[0]);
    expect(g[0]).toBeGreaterThan(g[2]);
    for (let k = 0; k < 2; k++) {
      const column = out.loadings.map((row: number[]) => row[k]);
      const largest = column.reduce((a: number, b: number) => (Math.abs(b) > Math.abs(a) ? b : a), 0);
      expect(largest).toBeGreaterThan(0);
    }
  });

  it('fits probabilistic PCA with the closed-form σ² repeated as specific variance', () => {
    const out = fit(['--method', 'ppca', '--factors', '2']);
    expect(out.method).toBe('ppca');
    for (const psi of out.specificVariance) expect(Math.abs(psi / reference.ppcaNoiseVariance - 1)).toBeLessThan(1e-10);
    expect(Number.isFinite(out.logLikelihood)).toBe(true);
  });

  it('gives the sample covariance and its Gaussian log-likelihood like numpy/scipy', () => {
    const out = fit(['--method', 'sample']);
    expect(out.factors).toBeNull();
    expect(out.loadings).toBeNull();
    const cov = out.covariance.flat();
    expect(relativeFrobenius(cov, reference.sampleCovariance)).toBeLessThan(1e-12);
    expect(Math.abs(out.logLikelihood - reference.sampleLogLikelihood)).toBeLessThan(1e-9 * Math.abs(reference.sampleLogLikelihood));
  });

  it('gives the Ledoit–Wolf shrinkage and covariance like scikit-learn', () => {
    const out = fit(['--method', 'ledoit-wolf']);
    expect(Math.abs(out.shrinkage - reference.ledoitWolfShrinkage)).toBeLessThan(1e-10);
    expect(relativeFrobenius(out.covariance.flat(), reference.ledoitWolfCovariance)).toBeLessThan(1e-10);
  });

  it('handles missing cells and reports them', () => {
    const r = cli(['fit', '--returns', `${fixtures}/returns_missing.csv`, '--method', 'fa', '--factors', '2']);
    expect(r.status).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.missingCells).toBe(17);
    expect(out.missingPolicy).toBe('em');
    expect(out.incompleteDates).toBe(17);
    expect(Number.isFinite(out.logLikelihood)).toBe(true);
    expect(out.converged).toBe(true);
  });

  it('chooses L when --factors is omitted and says why', () => {
    const out = fit(['--method', 'fa']);
    expect(out.factorChoice.recommended).toBe(out.factors);
    expect(out.factors).toBeGreaterThanOrEqual(1);
    expect(out.factorChoice.reason.length).toBeGreaterThan(0);
  });

  it('applies exponential weights and zero mean', () => {
    const out = fit(['--method', 'fa', '--factors', '1', '--half-life', '30', '--zero-mean']);
    expect(out.weighting.kind).toBe('exponential');
    expect(out.weighting.halfLife).toBe(30);
    expect(out.weighting.decay).toBeCloseTo(0.5 ** (1 / 30), 15);
    expect(out.weighting.effectiveSampleSize).toBeLessThan(120);
    expect(out.mean.every((m: number) => m === 0)).toBe(true);
    expect(out.meanHandling).toBe('zero');
  });
});

describe('npm run cli -- risk', () => {
  it('prints volatility, annualised volatility and contributions like numpy (sample covariance)', () => {
    const r = cli(['risk', '--returns', `${fixtures}/returns.csv`, '--weights', `${fixtures}/weights.csv`, '--method', 'sample']);
    expect(r.status).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(Math.abs(out.volatility / reference.sampleVolatility - 1)).toBeLessThan(1e-12);
    expect(out.annualisedVolatility).toBeCloseTo(out.volatility * Math.sqrt(252), 15);
    const contributions = out.contributions.map((c: { contribution: number }) => c.contribution);
    contributions.forEach((c: number, i: number) => expect(Math.abs(c - reference.sampleContributions[i])).toBeLessThan(1e-12 * reference.sampleVolatility));
    expect(out.contributions.map((c: { symbol: string }) => c.symbol)).toEqual(reference.symbols);
    expect(out.assumptions.join(' ')).toMatch(/not guarantees/);
  });

  it('runs through the npm script and reports tracking error against a benchmark file over a horizon', () => {
    const result = spawnSync('npm', ['run', '-s', 'cli', '--', 'risk', '--returns', `${fixtures}/returns.csv`, '--weights', `${fixtures}/weights.csv`, '--benchmark', `${fixtures}/benchmark.csv`, '--method', 'ppca', '--factors', '2', '--horizon', '10'], { cwd: repo, encoding: 'utf8' });
    expect(result.stderr).toBe('');
    expect(result.status).toBe(0);
    const out = JSON.parse(result.stdout);
    expect(out.trackingError.volatility).toBeGreaterThan(0);
    expect(out.trackingError.annualised).toBeCloseTo(out.trackingError.volatility * Math.sqrt(252), 15);
    expect(out.parametric[0].horizon).toBe(10);
    // Square-root-of-time: VaR₉₅ over 10 periods = 1.6448536… · σ · √10 (zero mean).
    expect(out.parametric[0].valueAtRisk).toBeCloseTo(1.6448536269514722 * out.volatility * Math.sqrt(10), 14);
  });

  it('splits factor and specific variance for a factor model', () => {
    const r = cli(['risk', '--returns', `${fixtures}/returns.csv`, '--weights', `${fixtures}/weights.csv`, '--method', 'fa', '--factors', '2', '--periods-per-year', '52']);
    expect(r.status).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.factorVariance + out.specificVariance).toBeCloseTo(out.variance, 15);
    expect(out.annualisedVolatility).toBeCloseTo(out.volatility * Math.sqrt(52), 15);
    const sum = out.contributions.reduce((s: number, c: { contribution: number }) => s + c.contribution, 0);
    expect(Math.abs(sum - out.volatility)).toBeLessThan(1e-15);
    expect(out.exposure.caveat).toMatch(/orientation/);
  });
});

describe('npm run cli errors', () => {
  const expectError = (args: string[], status: number, pattern: RegExp) => {
    const r = cli(args);
    expect(r.status).toBe(status);
    expect(r.stdout).toBe('');
    expect(r.stderr).toMatch(pattern);
  };
  it('reports an unreadable file', () => {
    expectError(['fit', '--returns', `${fixtures}/no-such-file.csv`, '--method', 'sample'], 1, /cannot read the returns file .*no-such-file\.csv.*ENOENT/);
  });
  it('names the row and column of a non-numeric cell', () => {
    expectError(['fit', '--returns', `${fixtures}/bad_cell.csv`, '--method', 'sample'], 1, /row 4 \(date 2025-01-03\), column "ZQ2": "abc" is not a number/);
    expectError(['fit', '--returns', `${fixtures}/percent_cell.csv`, '--method', 'sample'], 1, /column "ZQ2": "1\.5%" is not a number \(give simple returns as decimals/);
  });
  it('rejects L ≥ N', () => {
    expectError(['fit', '--returns', `${fixtures}/returns.csv`, '--method', 'fa', '--factors', '8'], 1, /--factors 8 must be smaller than the number of assets \(8\)/);
  });
  it('rejects too few observations', () => {
    expectError(['fit', '--returns', `${fixtures}/short.csv`, '--method', 'sample'], 1, /too few observations/);
  });
  it('rejects a weights file naming an unknown symbol', () => {
    expectError(['risk', '--returns', `${fixtures}/returns.csv`, '--weights', `${fixtures}/weights_unknown.csv`, '--method', 'sample'], 1, /row 3: symbol "ZZ9" is not a column of the returns file/);
  });
  it('rejects a bad command line with usage', () => {
    expectError(['fit', '--returns', `${fixtures}/returns.csv`, '--method', 'pca'], 2, /unknown --method "pca"[\s\S]*usage:/);
    expectError(['fit', '--method', 'fa'], 2, /--returns FILE\.csv is required/);
    expectError(['risk', '--returns', `${fixtures}/returns.csv`, '--method', 'fa'], 2, /--weights W\.csv is required/);
    expectError(['fit', '--returns', `${fixtures}/returns.csv`, '--method', 'sample', '--factors', '2'], 2, /--factors applies to fa and ppca only/);
  });
});
