import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { testContext, signIn, unique } from '../helpers/app';
import { insertReturnSeries, removeAssets, storeFittedRun } from '../helpers/portfolioModels';
import { createRandom } from '../../server/engine/random';
import { plantedPanel } from '../../server/engine/planted';
import { clearRiskCache } from '../../server/services/portfolioRiskService';

const ctx = testContext();
const tokens: Record<string, string> = {};
const prefix = unique('PF').toUpperCase();
const N = 30;
const T = 200;
const symbols = Array.from({ length: N }, (_, i) => `${prefix}${String(i).padStart(2, '0')}`);
const dates = Array.from({ length: T }, (_, t) => new Date(Date.UTC(2024, 0, 1 + t)).toISOString().slice(0, 10));
let assetIds: number[] = [];
let faRun: { id: number; label: string };
let ppcaRun: { id: number; label: string };

const auth = (role: string) => ({ Authorization: `Bearer ${tokens[role]}` });

async function createPortfolio(role: string, body: Record<string, unknown>) {
  const res = await request(ctx.app).post('/api/portfolios').set(auth(role)).send(body);
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  return res.body as { id: number; name: string };
}

beforeAll(async () => {
  for (const role of ['admin', 'analyst', 'pm', 'compliance']) tokens[role] = await signIn(ctx.app, role as never);
  tokens.pm2 = await signIn(ctx.app, { email: 'pm2@quillfield.example', password: 'demo-pm-pass' });
  const planted = plantedPanel({ assets: N, observations: T, factors: 3, seed: 77 });
  const values = Array.from({ length: T }, (_, t) => Array.from(planted.panel.values.subarray(t * N, (t + 1) * N)));
  assetIds = await insertReturnSeries(ctx.knex, symbols, dates, values);
  faRun = await storeFittedRun(ctx.knex, { symbols, from: dates[0], to: dates[T - 1], estimator: 'fa', factors: 3 });
  ppcaRun = await storeFittedRun(ctx.knex, { symbols, from: dates[0], to: dates[T - 1], estimator: 'ppca', factors: 3 });
});

afterAll(async () => {
  await removeAssets(ctx.knex, assetIds);
  await ctx.close();
});

describe('portfolio access', () => {
  it('a PM cannot read or change another PM’s fund; analysts and compliance read it; admins edit it', async () => {
    const fund = await createPortfolio('pm', { name: `Access ${prefix}` });
    for (const method of ['get', 'patch', 'delete'] as const) {
      const res = await request(ctx.app)[method](`/api/portfolios/${fund.id}`).set(auth('pm2')).send(method === 'patch' ? { name: 'taken over' } : undefined);
      expect(res.status, `${method} by another PM`).toBe(404);
    }
    const risk = await request(ctx.app).get(`/api/portfolios/${fund.id}/risk`).set(auth('pm2'));
    expect(risk.status).toBe(404);
    const list = await request(ctx.app).get('/api/portfolios').set(auth('pm2'));
    expect(list.body.portfolios.some((p: { id: number }) => p.id === fund.id)).toBe(false);
    const own = await request(ctx.app).get('/api/portfolios').set(auth('pm'));
    expect(own.body.portfolios.find((p: { id: number }) => p.id === fund.id)?.canEdit).toBe(true);

    for (const role of ['analyst', 'compliance', 'admin']) {
      const res = await request(ctx.app).get(`/api/portfolios/${fund.id}`).set(auth(role));
      expect(res.status, role).toBe(200);
      expect(res.body.canEdit).toBe(role === 'admin');
    }
    const byAnalyst = await request(ctx.app).put(`/api/portfolios/${fund.id}/holdings`).set(auth('analyst')).send({ mode: 'weights', holdings: [] });
    expect(byAnalyst.status).toBe(403);
    const byAdmin = await request(ctx.app).patch(`/api/portfolios/${fund.id}`).set(auth('admin')).send({ description: 'checked by admin' });
    expect(byAdmin.status).toBe(200);
    expect(byAdmin.body.description).toBe('checked by admin');
  });

  it('benchmark portfolios are readable by every role but editable only by their owner or an admin', async () => {
    const bench = await createPortfolio('pm', { name: `Bench ${prefix}`, kind: 'benchmark' });
    const read = await request(ctx.app).get(`/api/portfolios/${bench.id}`).set(auth('pm2'));
    expect(read.status).toBe(200);
    expect(read.body.canEdit).toBe(false);
    const edit = await request(ctx.app).patch(`/api/portfolios/${bench.id}`).set(auth('pm2')).send({ name: 'mine now' });
    expect(edit.status).toBe(403);
    // pm2 may choose it as the benchmark of their own fund
    const fund = await createPortfolio('pm2', { name: `Uses bench ${prefix}`, benchmarkPortfolioId: bench.id });
    const detail = await request(ctx.app).get(`/api/portfolios/${fund.id}`).set(auth('pm2'));
    expect(detail.body.benchmark).toEqual({ id: bench.id, name: `Bench ${prefix}` });
    // but not another PM's fund
    const other = await createPortfolio('pm', { name: `Private ${prefix}` });
    const refused = await request(ctx.app).patch(`/api/portfolios/${fund.id}`).set(auth('pm2')).send({ benchmarkPortfolioId: other.id });
    expect(refused.status).toBe(422);
    expect(refused.body.issues[0].path).toBe('benchmarkPortfolioId');
  });
});

describe('holdings', () => {
  it('names every offending row and stores nothing when any row is wrong', async () => {
    const fund = await createPortfolio('pm', { name: `Validation ${prefix}` });
    const good = await request(ctx.app)
      .put(`/api/portfolios/${fund.id}/holdings`)
      .set(auth('pm'))
      .send({ mode: 'weights', holdings: [{ symbol: symbols[0], weight: 0.6 }, { symbol: symbols[1], weight: 0.4 }] });
    expect(good.status, JSON.stringify(good.body)).toBe(200);

    const bad = await request(ctx.app)
      .put(`/api/portfolios/${fund.id}/holdings`)
      .set(auth('pm'))
      .send({
        mode: 'weights',
        holdings: [
          { symbol: symbols[2], weight: 0.5 },
          { symbol: `${prefix}NOPE`, weight: 0.2 },
          { symbol: symbols[2].toLowerCase(), weight: 0.2 },
          { symbol: symbols[3], weight: null },
        ],
      });
    expect(bad.status).toBe(422);
    const paths = bad.body.issues.map((i: { path: string }) => i.path);
    expect(paths).toEqual(['holdings.1.symbol', 'holdings.2.symbol', 'holdings.3.weight']);
    expect(bad.body.issues[0].message).toContain(`row 2: unknown symbol '${prefix}NOPE'`);
    expect(bad.body.issues[1].message).toContain('duplicates row 1');
    expect(bad.body.issues[2].message).toContain('row 4');

    const sum = await request(ctx.app)
      .put(`/api/portfolios/${fund.id}/holdings`)
      .set(auth('pm'))
      .send({ mode: 'weights', weightUnit: 'percent', holdings: [{ symbol: symbols[2], weight: 50 }, { symbol: symbols[3], weight: 40 }] });
    expect(sum.status).toBe(422);
    expect(sum.body.issues[0].message).toMatch(/sum to 90 %, not 100 %/);

    const kept = await request(ctx.app).get(`/api/portfolios/${fund.id}`).set(auth('pm'));
    expect(kept.body.holdings.map((h: { symbol: string; weight: number }) => [h.symbol, h.weight])).toEqual([
      [symbols[0], 0.6],
      [symbols[1], 0.4],
    ]);
  });

  it('normalises market values and percent weights on save, and audits the change', async () => {
    const fund = await createPortfolio('pm', { name: `Normalise ${prefix}`, baseCurrency: 'eur' });
    expect((await request(ctx.app).get(`/api/portfolios/${fund.id}`).set(auth('pm'))).body.baseCurrency).toBe('EUR');
    const mv = await request(ctx.app)
      .put(`/api/portfolios/${fund.id}/holdings`)
      .set(auth('pm'))
      .send({ mode: 'market-values', holdings: [{ symbol: symbols[4], marketValue: 300_000 }, { symbol: symbols[5], marketValue: 100_000 }] });
    expect(mv.status).toBe(200);
    expect(mv.body.holdings.map((h: { weight: number }) => h.weight)).toEqual([0.75, 0.25]);
    expect(mv.body.totalMarketValue).toBe(400_000);
    expect(mv.body.inputMode).toBe('market-values');

    const pct = await request(ctx.app)
      .put(`/api/portfolios/${fund.id}/holdings`)
      .set(auth('pm'))
      .send({ mode: 'weights', weightUnit: 'percent', holdings: [{ symbol: symbols[4], weight: 70 }, { symbol: symbols[5], weight: 30.005 }] });
    expect(pct.status).toBe(200);
    const weights = pct.body.holdings.map((h: { weight: number }) => h.weight);
    expect(weights[0] + weights[1]).toBeCloseTo(1, 15);
    expect(weights[0]).toBeCloseTo(70 / 100.005, 15);

    const audit = await ctx.knex('audit_events').where({ object_type: 'portfolio', object_id: String(fund.id) }).orderBy('id').select('action', 'actor_email');
    expect(audit.map((a) => a.action)).toEqual(['portfolio.created', 'portfolio.holdings-replaced', 'portfolio.holdings-replaced']);
    expect(audit[0].actor_email).toBe('pm@quillfield.example');
  });

  it('takes a CSV upload and names the file’s line when one is wrong', async () => {
    const fund = await createPortfolio('pm', { name: `CSV ${prefix}` });
    const csv = `symbol,market_value\n${symbols[6]},1000\n${symbols[7]},3000\n`;
    const ok = await request(ctx.app).post(`/api/portfolios/${fund.id}/holdings/csv`).set(auth('pm')).attach('file', Buffer.from(csv), 'h.csv');
    expect(ok.status, JSON.stringify(ok.body)).toBe(200);
    expect(ok.body.holdings.map((h: { symbol: string; weight: number }) => [h.symbol, h.weight])).toEqual([
      [symbols[6], 0.25],
      [symbols[7], 0.75],
    ]);
    const wrong = `symbol,weight\n${symbols[6]},0.5\n${prefix}ZZ,0.3\n${symbols[8]},abc\n`;
    const bad = await request(ctx.app).post(`/api/portfolios/${fund.id}/holdings/csv`).set(auth('pm')).attach('file', Buffer.from(wrong), 'h.csv');
    expect(bad.status).toBe(422);
    expect(bad.body.issues).toEqual([{ path: 'line 4', message: "line 4: 'abc' is not a number" }]);
    const unknown = `symbol,weight\n${symbols[6]},0.7\n${prefix}ZZ,0.3\n`;
    const bad2 = await request(ctx.app).post(`/api/portfolios/${fund.id}/holdings/csv`).set(auth('pm')).attach('file', Buffer.from(unknown), 'h.csv');
    expect(bad2.status).toBe(422);
    expect(bad2.body.issues[0].message).toBe(`line 3: unknown symbol '${prefix}ZZ' (no such asset in the stored return series)`);
    const header = await request(ctx.app).post(`/api/portfolios/${fund.id}/holdings/csv`).set(auth('pm')).attach('file', Buffer.from('ticker,amount\nX,1\n'), 'h.csv');
    expect(header.status).toBe(422);
    expect(header.body.issues[0].path).toBe('line 1');
  });
});

describe('risk', () => {
  let fundId: number;
  let benchId: number;
  const held = symbols.slice(0, 12);

  beforeAll(async () => {
    const bench = await createPortfolio('pm', { name: `Risk bench ${prefix}`, kind: 'benchmark' });
    benchId = bench.id;
    const rng = createRandom(5);
    await request(ctx.app)
      .put(`/api/portfolios/${benchId}/holdings`)
      .set(auth('pm'))
      .send({ mode: 'market-values', holdings: symbols.map((symbol) => ({ symbol, marketValue: 1 + rng.uniform() })) })
      .expect(200);
    const fund = await createPortfolio('pm', { name: `Risk ${prefix}`, benchmarkPortfolioId: benchId });
    fundId = fund.id;
    const raw = held.map(() => 0.5 + rng.uniform());
    const total = raw.reduce((s, x) => s + x, 0);
    await request(ctx.app)
      .put(`/api/portfolios/${fundId}/holdings`)
      .set(auth('pm'))
      .send({ mode: 'weights', holdings: held.map((symbol, i) => ({ symbol, weight: raw[i] / total })) })
      .expect(200);
  });

  it('answers every figure of the risk page, naming the model version', async () => {
    const res = await request(ctx.app).get(`/api/portfolios/${fundId}/risk`).query({ model: faRun.id, horizon: 10, draws: 20000, seed: 7, contributors: 'all', history: 'true' }).set(auth('pm'));
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    const r = res.body;
    expect(r.model).toMatchObject({ runId: faRun.id, label: faRun.label, method: 'fa', lifecycle: 'draft', assets: N, observations: T, factors: 3, periodsPerYear: 252 });
    expect(r.volatilities.map((v: { estimator: string }) => v.estimator)).toEqual(['fa', 'ppca', 'sample', 'ledoit-wolf']);
    const byEstimator = Object.fromEntries(r.volatilities.map((v: { estimator: string }) => [v.estimator, v]));
    expect(byEstimator.fa.runId).toBe(faRun.id);
    expect(byEstimator.fa.annualisedVolatility).toBeCloseTo(r.annualisedVolatility, 14);
    expect(byEstimator.sample.ratioToSample).toBe(1);
    expect(byEstimator.fa.ratioToSample).toBeCloseTo(byEstimator.fa.volatility / byEstimator.sample.volatility, 14);
    expect(byEstimator['ledoit-wolf'].annualisedVolatility).toBeGreaterThan(0);
    expect(r.concentrationRatio).toBeCloseTo(N / T, 14);
    expect(r.sampleNote).toBeNull(); // q = 0.15
    // factor / specific split adds up
    expect(r.split.factorVariance + r.split.specificVariance).toBeCloseTo(r.volatility ** 2, 16);
    expect(r.split.factorShare + r.split.specificShare).toBeCloseTo(1, 14);
    // Euler contributions: percentages sum to 100 %, contributions to the annualised volatility
    expect(r.contributors).toHaveLength(held.length);
    expect(r.otherContributors).toBeNull();
    const percent = r.contributors.reduce((s: number, c: { percent: number }) => s + c.percent, 0);
    expect(Math.abs(percent - 1)).toBeLessThan(1e-12);
    const contribution = r.contributors.reduce((s: number, c: { contribution: number }) => s + c.contribution, 0);
    expect(Math.abs(contribution - r.annualisedVolatility)).toBeLessThan(1e-12);
    for (const c of r.contributors) expect(c.contribution).toBeCloseTo(c.weight * c.marginal, 14);
    // tracking error against the benchmark
    expect(r.trackingError.benchmark).toEqual({ id: benchId, name: `Risk bench ${prefix}` });
    expect(r.trackingError.annualisedVolatility).toBeGreaterThan(0);
    expect(r.trackingError.annualisedVolatility).toBeCloseTo(r.trackingError.volatility * Math.sqrt(252), 14);
    // parametric VaR/ES under normality over 10 days: z σ √h (common practice, z₀.₉₉ = 2.3263478740408408)
    expect(r.tailRisk.horizon).toBe(10);
    const p99 = r.tailRisk.parametric.find((t: { confidence: number }) => t.confidence === 0.99);
    expect(p99.valueAtRisk).toBeCloseTo(2.3263478740408408 * r.volatility * Math.sqrt(10), 14);
    expect(p99.expectedShortfall).toBeGreaterThan(p99.valueAtRisk);
    // Monte Carlo from the generative model: seeded (same answer twice), close to the parametric figure with 20 000 draws
    expect(r.tailRisk.monteCarlo).toMatchObject({ draws: 20000, seed: 7 });
    const mc99 = r.tailRisk.monteCarlo.levels.find((t: { confidence: number }) => t.confidence === 0.99);
    expect(Math.abs(mc99.valueAtRisk / p99.valueAtRisk - 1)).toBeLessThan(0.05);
    expect(Math.abs(r.tailRisk.monteCarlo.simulatedVolatility / r.volatility - 1)).toBeLessThan(0.02);
    const again = await request(ctx.app).get(`/api/portfolios/${fundId}/risk`).query({ model: faRun.id, horizon: 10, draws: 20000, seed: 7, contributors: 'all', history: 'true' }).set(auth('pm'));
    expect(again.body.tailRisk.monteCarlo).toEqual(r.tailRisk.monteCarlo);
    // exposure summary: rotation-invariant share and norm, canonical exposures with the orientation caveat
    expect(r.exposure.exposures).toHaveLength(3);
    expect(r.exposure.exposureNorm ** 2).toBeCloseTo(r.split.factorVariance, 16);
    expect(r.exposure.factorVarianceShare).toBeCloseTo(r.split.factorShare, 14);
    expect(r.exposure.caveat).toMatch(/orientation/);
    // factor return history: one point per date of the window
    expect(r.factorReturnHistory).toHaveLength(T);
    expect(r.factorReturnHistory[0].date).toBe(dates[0]);
    expect(r.assumptions.join(' ')).toMatch(/normal/);
  });

  it('says when holdings are in another currency than the base currency (exchange-rate risk left out)', async () => {
    const ask = () => request(ctx.app).get(`/api/portfolios/${fundId}/risk`).query({ model: faRun.id, contributors: 'all' }).set(auth('pm'));
    const before = await ask();
    expect(before.body.currencyNote).toBeNull();
    const [first, second] = before.body.contributors as { symbol: string; weight: number }[];
    await ctx.knex('assets').whereIn('symbol', [first.symbol, second.symbol]).update({ currency: 'EUR' });
    try {
      clearRiskCache(); // asset metadata is read with the model, once per process
      const after = await ask();
      const weight = ((first.weight + second.weight) * 100).toFixed(1);
      expect(after.body.currencyNote).toBe(
        `Holdings worth ${weight} % of the weight are in EUR, not the portfolio's base currency USD: their returns are used as stored, in their own currency, so these figures leave out exchange-rate risk against USD.`,
      );
      expect(after.body.assumptions).toContain(after.body.currencyNote);
    } finally {
      await ctx.knex('assets').whereIn('symbol', [first.symbol, second.symbol]).update({ currency: null });
      clearRiskCache();
    }
  });

  it('lists the largest contributors by default and sums the rest, so the totals still check', async () => {
    const full = await request(ctx.app).get(`/api/portfolios/${fundId}/risk`).query({ model: faRun.id, contributors: 'all' }).set(auth('pm'));
    const top = await request(ctx.app).get(`/api/portfolios/${fundId}/risk`).query({ model: faRun.id, contributors: 2 }).set(auth('pm'));
    expect(top.status, JSON.stringify(top.body)).toBe(200);
    expect(top.body.contributors).toEqual(full.body.contributors.slice(0, 2));
    const rest = full.body.contributors.slice(2);
    expect(top.body.otherContributors.count).toBe(rest.length);
    expect(top.body.otherContributors.weight).toBeCloseTo(rest.reduce((s: number, c: { weight: number }) => s + c.weight, 0), 14);
    const percent = top.body.contributors.reduce((s: number, c: { percent: number }) => s + c.percent, top.body.otherContributors.percent);
    expect(Math.abs(percent - 1)).toBeLessThan(1e-12);
    const contribution = top.body.contributors.reduce((s: number, c: { contribution: number }) => s + c.contribution, top.body.otherContributors.contribution);
    expect(Math.abs(contribution - top.body.annualisedVolatility)).toBeLessThan(1e-12);
    // The history comes only when asked for; the default lists at most 25 contributors.
    expect(top.body.factorReturnHistory).toBeNull();
    const plain = await request(ctx.app).get(`/api/portfolios/${fundId}/risk`).query({ model: faRun.id }).set(auth('pm'));
    expect(plain.body.contributors).toHaveLength(Math.min(25, full.body.contributors.length));
    const bad = await request(ctx.app).get(`/api/portfolios/${fundId}/risk`).query({ model: faRun.id, contributors: 'some', history: 'maybe' }).set(auth('pm'));
    expect(bad.status).toBe(422);
    expect(bad.body.issues.map((i: { path: string }) => i.path).sort()).toEqual(['contributors', 'history']);
  });

  it('keeps an answer only while its inputs are unchanged: new holdings give a fresh answer', async () => {
    const ask = () => request(ctx.app).get(`/api/portfolios/${fundId}/risk`).query({ model: faRun.id, seed: 11 }).set(auth('pm'));
    const first = await ask();
    const second = await ask();
    expect(second.headers['x-loadline-risk-cache']).toBe('hit');
    expect(second.body).toEqual(first.body);
    const detail = await request(ctx.app).get(`/api/portfolios/${fundId}`).set(auth('pm'));
    const original = detail.body.holdings.map((h: { symbol: string; weight: number }) => ({ symbol: h.symbol, weight: h.weight }));
    const tilted = original.map((h: { symbol: string; weight: number }, i: number) => ({ symbol: h.symbol, weight: i === 0 ? h.weight + 0.3 : h.weight }));
    const total = tilted.reduce((sum: number, h: { weight: number }) => sum + h.weight, 0);
    await request(ctx.app)
      .put(`/api/portfolios/${fundId}/holdings`)
      .set(auth('pm'))
      .send({ mode: 'weights', holdings: tilted.map((h: { symbol: string; weight: number }) => ({ ...h, weight: h.weight / total })) })
      .expect(200);
    const third = await ask();
    expect(third.headers['x-loadline-risk-cache']).toBe('miss');
    expect(third.body.annualisedVolatility).not.toBeCloseTo(first.body.annualisedVolatility, 8);
    await request(ctx.app).put(`/api/portfolios/${fundId}/holdings`).set(auth('pm')).send({ mode: 'weights', holdings: original }).expect(200);
    const restored = await ask();
    expect(restored.body.annualisedVolatility).toBeCloseTo(first.body.annualisedVolatility, 14);
  });

  it('uses the chosen PPCA model for the PPCA row', async () => {
    const res = await request(ctx.app).get(`/api/portfolios/${fundId}/risk`).query({ model: ppcaRun.id }).set(auth('analyst'));
    expect(res.status).toBe(200);
    expect(res.body.model.method).toBe('ppca');
    const ppca = res.body.volatilities.find((v: { estimator: string }) => v.estimator === 'ppca');
    expect(ppca.runId).toBe(ppcaRun.id);
    expect(ppca.annualisedVolatility).toBeCloseTo(res.body.annualisedVolatility, 14);
  });

  it('answers which approved model is the default, or says none is approved', async () => {
    const latest = await ctx.knex('model_runs').where({ lifecycle: 'approved', status: 'succeeded' }).orderBy([{ column: 'approved_at', order: 'desc' }, { column: 'id', order: 'desc' }]).first();
    const res = await request(ctx.app).get(`/api/portfolios/${fundId}/risk`).set(auth('pm'));
    if (!latest) {
      expect(res.status).toBe(409);
      expect(res.body.error).toMatch(/No model is approved/);
    } else {
      expect([200, 422]).toContain(res.status); // 422 when the approved model's universe holds none of these test assets
      if (res.status === 200) expect(res.body.model.runId).toBe(latest.id);
      else expect(res.body.error).toMatch(/universe/);
    }
  });

  it('what-if: edited weights change the figures and nothing is saved', async () => {
    const base = await request(ctx.app).get(`/api/portfolios/${fundId}/risk`).query({ model: faRun.id }).set(auth('pm'));
    const before = await request(ctx.app).get(`/api/portfolios/${fundId}`).set(auth('pm'));
    const edited = before.body.holdings.map((h: { symbol: string; weight: number }, i: number) => ({ symbol: h.symbol, weight: i === 0 ? h.weight + 0.2 : h.weight }));
    const res = await request(ctx.app).post(`/api/portfolios/${fundId}/risk/what-if`).set(auth('pm')).send({ holdings: edited, model: faRun.id });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect(res.body.whatIf).toBe(true);
    expect(res.body.weightSum).toBeCloseTo(1.2, 12);
    expect(res.body.annualisedVolatility).not.toBeCloseTo(base.body.annualisedVolatility, 6);
    const percent = res.body.contributors.reduce((s: number, c: { percent: number }) => s + c.percent, 0);
    expect(Math.abs(percent - 1)).toBeLessThan(1e-12);
    const after = await request(ctx.app).get(`/api/portfolios/${fundId}`).set(auth('pm'));
    expect(after.body.holdings).toEqual(before.body.holdings);
    const bad = await request(ctx.app)
      .post(`/api/portfolios/${fundId}/risk/what-if`)
      .set(auth('pm'))
      .send({ holdings: [...edited, { symbol: `${prefix}QQ`, weight: 0.1 }], model: faRun.id });
    expect(bad.status).toBe(422);
    expect(bad.body.issues[0]).toEqual({ path: `holdings.${edited.length}.symbol`, message: `row ${edited.length + 1}: unknown symbol '${prefix}QQ'` });
    // another PM cannot run what-ifs on it either
    const foreign = await request(ctx.app).post(`/api/portfolios/${fundId}/risk/what-if`).set(auth('pm2')).send({ holdings: edited, model: faRun.id });
    expect(foreign.status).toBe(404);
  });
});

describe('the default model when the latest approved one covers none of the holdings', () => {
  it('stands in the newest approved model that covers them, and says so; a chosen model is never replaced', async () => {
    const covering = await storeFittedRun(ctx.knex, { symbols: symbols.slice(0, 10), from: dates[0], to: dates[T - 1], estimator: 'fa', factors: 2 });
    const elsewhere = await storeFittedRun(ctx.knex, { symbols: symbols.slice(20), from: dates[0], to: dates[T - 1], estimator: 'ppca', factors: 2 });
    const approver = await ctx.knex('users').where({ email: 'analyst2@quillfield.example' }).first('id');
    const approve = (id: number, at: string) =>
      ctx.knex('model_runs').where({ id }).update({ lifecycle: 'approved', approved_by: approver.id, approved_at: ctx.knex.raw(at), approval_comment: 'test approval' });
    await approve(covering.id, "now() - interval '1 minute'");
    await approve(elsewhere.id, 'now()'); // the newer approval covers other assets only
    try {
      const fund = await createPortfolio('pm', { name: `Default model ${prefix}` });
      const holdings = symbols.slice(0, 5).map((symbol) => ({ symbol, weight: 0.2 }));
      await request(ctx.app).put(`/api/portfolios/${fund.id}/holdings`).set(auth('pm')).send({ mode: 'weights', holdings }).expect(200);

      const res = await request(ctx.app).get(`/api/portfolios/${fund.id}/risk`).set(auth('pm'));
      expect(res.status, JSON.stringify(res.body)).toBe(200);
      expect(res.body.model.runId).toBe(covering.id);
      expect(res.body.modelNote).toMatch(new RegExp(`covers none of this portfolio's holdings: ${covering.label} is the newest approved model that does\\.$`));
      const whatIf = await request(ctx.app).post(`/api/portfolios/${fund.id}/risk/what-if`).set(auth('pm')).send({ holdings });
      expect(whatIf.status, JSON.stringify(whatIf.body)).toBe(200);
      expect(whatIf.body.model.runId).toBe(covering.id);
      expect(whatIf.body.modelNote).toBe(res.body.modelNote);

      const chosen = await request(ctx.app).get(`/api/portfolios/${fund.id}/risk`).query({ model: elsewhere.id }).set(auth('pm'));
      expect(chosen.status).toBe(422);
      expect(chosen.body.error).toMatch(/universe/);
      const chosenOk = await request(ctx.app).get(`/api/portfolios/${fund.id}/risk`).query({ model: covering.id }).set(auth('pm'));
      expect(chosenOk.body.modelNote).toBeNull();
    } finally {
      // Retired again, so other tests' default model is not these.
      await ctx.knex('model_runs').whereIn('id', [covering.id, elsewhere.id]).update({ lifecycle: 'retired', retired_at: ctx.knex.fn.now() });
    }
  });
});
