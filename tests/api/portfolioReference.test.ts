/**
 * The volatility figures of one portfolio against an independent numpy / scikit-learn computation
 * (tests/reference/generate_portfolio_risk.py → fixtures/portfolio_risk.json): the panel is stored as return series,
 * FA and PPCA are fitted and stored through the product's path, and the risk API is asked.
 * Tolerances: sample covariance and Ledoit–Wolf exactly (1e-10 relative: numpy.cov with ddof = 1; scikit-learn
 * LedoitWolf, 1/T); PPCA closed form 1e-8 relative; factor analysis 1e-4 relative (the engine's stated tolerance on
 * W Wᵀ + Ψ against scikit-learn's FactorAnalysis, lapack, tol 1e-12).
 */
import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { testContext, signIn, unique } from '../helpers/app';
import { insertReturnSeries, removeAssets, storeFittedRun } from '../helpers/portfolioModels';

interface Fixture {
  symbols: string[];
  dates: string[];
  values: number[][];
  holdings: { symbol: string; weight: number }[];
  factors: number;
  periodsPerYear: number;
  volatility: { sample: number; ledoitWolf: number; fa: number; ppca: number };
}
const fixture = JSON.parse(readFileSync(new URL('../reference/fixtures/portfolio_risk.json', import.meta.url), 'utf8')) as Fixture;

const ctx = testContext();
const prefix = unique('REF').toUpperCase();
const symbolOf = (s: string) => `${prefix}${s}`;
let token = '';
let assetIds: number[] = [];
let portfolioId = 0;
let runs: Record<'fa' | 'ppca', number> = { fa: 0, ppca: 0 };

const relative = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

beforeAll(async () => {
  token = await signIn(ctx.app, 'pm');
  const symbols = fixture.symbols.map(symbolOf);
  assetIds = await insertReturnSeries(ctx.knex, symbols, fixture.dates, fixture.values);
  const window = { symbols, from: fixture.dates[0], to: fixture.dates[fixture.dates.length - 1], factors: fixture.factors };
  runs = {
    fa: (await storeFittedRun(ctx.knex, { ...window, estimator: 'fa' })).id,
    ppca: (await storeFittedRun(ctx.knex, { ...window, estimator: 'ppca' })).id,
  };
  const created = await request(ctx.app).post('/api/portfolios').set('Authorization', `Bearer ${token}`).send({ name: `Reference ${prefix}` });
  portfolioId = created.body.id;
  const saved = await request(ctx.app)
    .put(`/api/portfolios/${portfolioId}/holdings`)
    .set('Authorization', `Bearer ${token}`)
    .send({ mode: 'weights', holdings: fixture.holdings.map((h) => ({ symbol: symbolOf(h.symbol), weight: h.weight })) });
  expect(saved.status, JSON.stringify(saved.body)).toBe(200);
});

afterAll(async () => {
  await removeAssets(ctx.knex, assetIds);
  await ctx.close();
});

async function volatilities(model: number) {
  const res = await request(ctx.app).get(`/api/portfolios/${portfolioId}/risk`).query({ model }).set('Authorization', `Bearer ${token}`);
  expect(res.status, JSON.stringify(res.body)).toBe(200);
  return Object.fromEntries(res.body.volatilities.map((v: { estimator: string; volatility: number }) => [v.estimator, v])) as Record<string, { volatility: number; annualisedVolatility: number; runId: number | null }>;
}

describe('portfolio volatility against numpy / scikit-learn', () => {
  it('sample covariance matches numpy.cov to 1e-10', async () => {
    const v = await volatilities(runs.fa);
    expect(relative(v.sample.volatility, fixture.volatility.sample)).toBeLessThan(1e-10);
    expect(relative(v.sample.annualisedVolatility, fixture.volatility.sample * Math.sqrt(fixture.periodsPerYear))).toBeLessThan(1e-10);
  });

  it('Ledoit–Wolf matches scikit-learn to 1e-10', async () => {
    const v = await volatilities(runs.fa);
    expect(relative(v['ledoit-wolf'].volatility, fixture.volatility.ledoitWolf)).toBeLessThan(1e-10);
  });

  it('factor analysis matches scikit-learn within the engine tolerance (1e-4)', async () => {
    const v = await volatilities(runs.fa);
    expect(v.fa.runId).toBe(runs.fa);
    expect(relative(v.fa.volatility, fixture.volatility.fa)).toBeLessThan(1e-4);
  });

  it('probabilistic PCA matches the closed form', async () => {
    const v = await volatilities(runs.ppca);
    expect(v.ppca.runId).toBe(runs.ppca);
    expect(relative(v.ppca.volatility, fixture.volatility.ppca)).toBeLessThan(1e-8);
    expect(relative(v.sample.volatility, fixture.volatility.sample)).toBeLessThan(1e-10);
  });
});
