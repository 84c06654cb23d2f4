import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { chiSquare1Survival, erf, erfc, NORMAL_QUANTILE_95, NORMAL_QUANTILE_99, normalCdf, normalQuantile } from './normalDistribution';

// scipy.stats.norm.ppf values written by tests/reference/generate_risk.py.
const fixture = JSON.parse(readFileSync(new URL('../../tests/reference/fixtures/risk.json', import.meta.url), 'utf8'));

describe('normal distribution', () => {
  it('names the exact 95 % and 99 % quantiles (1.645 and 2.326 rounded)', () => {
    expect(NORMAL_QUANTILE_95.toFixed(3)).toBe('1.645');
    expect(NORMAL_QUANTILE_99.toFixed(3)).toBe('2.326');
    expect(Math.abs(normalCdf(NORMAL_QUANTILE_95) - 0.95)).toBeLessThan(1e-15);
    expect(Math.abs(normalCdf(NORMAL_QUANTILE_99) - 0.99)).toBeLessThan(1e-15);
  });
  it('matches scipy.stats.norm.ppf', () => {
    for (const [p, z] of Object.entries(fixture.normalQuantiles) as [string, number][]) {
      expect(Math.abs(normalQuantile(Number(p)) - z)).toBeLessThan(4e-15 * Math.abs(z));
    }
  });
  it('has known values', () => {
    // erf(1) = 0.8427007929497149 and erfc(3) = 2.209049699858544e-5 (Abramowitz & Stegun 1964, Table 7.1).
    expect(Math.abs(erf(1) - 0.8427007929497149)).toBeLessThan(2e-16);
    expect(Math.abs(erfc(3) / 2.209049699858544e-5 - 1)).toBeLessThan(1e-13);
    expect(erfc(-1)).toBeCloseTo(2 - erfc(1), 15);
    expect(normalCdf(0)).toBe(0.5);
    // P(χ²₁ > 3.841458820694124) = 0.05: the 95 % critical value is 1.959963984540054².
    expect(Math.abs(chiSquare1Survival(1.959963984540054 ** 2) - 0.05)).toBeLessThan(1e-15);
    expect(normalQuantile(0.5)).toBe(0);
    expect(normalQuantile(0.025)).toBeCloseTo(-1.959963984540054, 14);
    expect(() => normalQuantile(1.5)).toThrow(RangeError);
  });
});
