// Asset metadata (upload and edit) and the data-quality figures, checked against simple-statistics.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import request from 'supertest';
import { mean, sampleStandardDeviation, median, medianAbsoluteDeviation, min, max } from 'simple-statistics';
import { testContext, signIn, unique } from '../helpers/app';
import { fixtureCopy, seriesOf, upload } from '../helpers/imports';

const ctx = testContext();
let analyst: string;
let pm: string;
const prefix = unique('Q').toUpperCase().slice(0, 12);

beforeAll(async () => {
  analyst = await signIn(ctx.app, 'analyst');
  pm = await signIn(ctx.app, 'pm');
  expect((await upload(ctx.app, analyst, fixtureCopy('long-simple-decimal.csv', prefix), { mode: 'commit' })).status).toBe(201);
  expect((await upload(ctx.app, analyst, fixtureCopy('warnings.csv', prefix), { mode: 'commit' })).status).toBe(201);
});
afterAll(() => ctx.close());

describe('data quality', () => {
  it('per-asset figures match an independent computation (simple-statistics)', async () => {
    const res = await request(ctx.app).get('/api/data-quality/assets').set('Authorization', `Bearer ${pm}`);
    expect(res.status).toBe(200);
    expect(res.body.frequency).toBe('daily');
    for (const suffix of ['AAA', 'WAR']) {
      const symbol = `${prefix}${suffix}`;
      const row = res.body.assets.find((a: { symbol: string }) => a.symbol === symbol);
      const values = (await seriesOf(ctx.knex, symbol)).map((s) => s.value);
      expect(row.observations).toBe(values.length);
      expect(row.mean).toBeCloseTo(mean(values), 14);
      expect(row.annualisedVolatility).toBeCloseTo(sampleStandardDeviation(values) * Math.sqrt(252), 12);
      expect(row.min).toBe(min(values));
      expect(row.max).toBe(max(values));
      // Modified z-score (Iglewicz & Hoaglin 1993): |0.6745 (x − median) / MAD| > 3.5.
      const m = median(values);
      const mad = medianAbsoluteDeviation(values);
      expect(row.outliers).toBe(values.filter((x) => Math.abs((0.6745 * (x - m)) / mad) > 3.5).length);
    }
    const warned = res.body.assets.find((a: { symbol: string }) => a.symbol === `${prefix}WAR`);
    expect(warned.outliers).toBe(1); // the planted 75 % return
    // 16 values (one on a Saturday) over the 30 business days from 2024-01-02 to 2024-02-12.
    expect(warned.missingShare).toBeCloseTo(1 - 16 / 30, 12);
    expect(warned).toMatchObject({ firstDate: '2024-01-02', lastDate: '2024-02-12', lastImportId: expect.any(Number) });
    const full = res.body.assets.find((a: { symbol: string }) => a.symbol === `${prefix}AAA`);
    expect(full.missingShare).toBe(0);
  });

  it('coverage by month: shares between 0 and 1 for every stored asset', async () => {
    const res = await request(ctx.app).get('/api/data-quality/coverage').set('Authorization', `Bearer ${pm}`);
    expect(res.status).toBe(200);
    const i = res.body.assets.findIndex((a: { symbol: string }) => a.symbol === `${prefix}AAA`);
    expect(i).toBeGreaterThanOrEqual(0);
    const j = res.body.months.indexOf('2024-01');
    expect(res.body.cells[i][j]).toBeGreaterThan(0);
    expect(res.body.cells.flat().every((v: number) => v >= 0 && v <= 1)).toBe(true);
  });
});

describe('asset metadata', () => {
  it('a metadata CSV updates known symbols and creates new ones, audited', async () => {
    const path = join(tmpdir(), `${prefix}-meta.csv`);
    writeFileSync(path, `symbol,name,sector,country,currency,asset_class\n${prefix}AAA,ALDER TESTWORKS,Industrials,GB,GBP,Equity\n${prefix}BBB,"BRACKEN, TEST & CO",Utilities,DE,EUR,Equity\n${prefix}NEW,NEWLY LISTED,Energy,FR,EUR,Equity\n`);
    const res = await request(ctx.app).post('/api/assets/metadata').set('Authorization', `Bearer ${analyst}`).attach('file', path);
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ rowsRead: 3, created: 1, updated: 2 });
    const rows = await ctx.knex('assets').where('symbol', 'like', `${prefix}%`).orderBy('symbol');
    expect(rows.find((r) => r.symbol === `${prefix}BBB`)).toMatchObject({ name: 'BRACKEN, TEST & CO', sector: 'Utilities', country: 'DE', currency: 'EUR' });
    expect(rows.find((r) => r.symbol === `${prefix}NEW`)).toMatchObject({ name: 'NEWLY LISTED', sector: 'Energy' });
    const audit = await ctx.knex('audit_events').where({ action: 'assets.metadata-imported', object_id: String(res.body.batchId) }).first();
    expect(audit.details).toMatchObject({ created: 1, updated: 2 });
  });

  it('a bad metadata file is rejected with row and column named, nothing changed', async () => {
    const before = await ctx.knex('assets').where('symbol', 'like', `${prefix}%`).orderBy('symbol');
    const path = join(tmpdir(), `${prefix}-meta-bad.csv`);
    writeFileSync(path, `symbol,name,currency\n${prefix}AAA,CHANGED NAME,GBP\n${prefix}CCC,OTHER,euro\n${prefix}AAA,TWICE,GBP\n`);
    const res = await request(ctx.app).post('/api/assets/metadata').set('Authorization', `Bearer ${analyst}`).attach('file', path);
    expect(res.status).toBe(422);
    expect(res.body.issues).toEqual([
      { path: 'row 3, column currency', message: '"euro" is not a three-letter currency code' },
      { path: 'row 4, column symbol', message: `${prefix}AAA already appears in row 2` },
    ]);
    expect(await ctx.knex('assets').where('symbol', 'like', `${prefix}%`).orderBy('symbol')).toEqual(before);
    const missing = join(tmpdir(), `${prefix}-meta-nosymbol.csv`);
    writeFileSync(missing, 'name,sector\nX,Y\n');
    const noSymbol = await request(ctx.app).post('/api/assets/metadata').set('Authorization', `Bearer ${analyst}`).attach('file', missing);
    expect(noSymbol.status).toBe(422);
    expect(noSymbol.body.issues[0].path).toBe('row 1, column symbol');
  });

  it('an asset’s metadata is edited by analysts (validated, audited) and read by everyone', async () => {
    const asset = await ctx.knex('assets').where({ symbol: `${prefix}CCC` }).first();
    const bad = await request(ctx.app).patch(`/api/assets/${asset.id}`).set('Authorization', `Bearer ${analyst}`).send({ currency: 'usd' });
    expect(bad.status).toBe(422);
    expect(bad.body.issues[0].path).toBe('currency');
    const denied = await request(ctx.app).patch(`/api/assets/${asset.id}`).set('Authorization', `Bearer ${pm}`).send({ name: 'NOPE' });
    expect(denied.status).toBe(403);
    const ok = await request(ctx.app).patch(`/api/assets/${asset.id}`).set('Authorization', `Bearer ${analyst}`).send({ name: 'CORRAN TESTWORKS', currency: 'CHF', country: 'CH' });
    expect(ok.status).toBe(200);
    expect(ok.body).toMatchObject({ symbol: `${prefix}CCC`, name: 'CORRAN TESTWORKS', currency: 'CHF', country: 'CH' });
    const read = await request(ctx.app).get(`/api/assets/${asset.id}`).set('Authorization', `Bearer ${pm}`);
    expect(read.body.name).toBe('CORRAN TESTWORKS');
    const audit = await ctx.knex('audit_events').where({ action: 'asset.updated', object_id: String(asset.id) }).first();
    expect(audit.details.changes).toMatchObject({ name: 'CORRAN TESTWORKS', currency: 'CHF' });
    const list = await request(ctx.app).get('/api/assets').set('Authorization', `Bearer ${pm}`);
    expect(list.body.assets.filter((a: { symbol: string }) => a.symbol.startsWith(prefix))).toHaveLength(5);
  });

  it('import history: batches with their summary, newest first', async () => {
    const res = await request(ctx.app).get('/api/imports?limit=500').set('Authorization', `Bearer ${pm}`);
    expect(res.status).toBe(200);
    const mine = res.body.batches.filter((b: { fileName: string }) => b.fileName.startsWith(prefix));
    expect(mine.map((b: { fileName: string }) => b.fileName)).toEqual([`${prefix}-meta.csv`, `${prefix}-warnings.csv`, `${prefix}-long-simple-decimal.csv`]);
    expect(mine[0]).toMatchObject({ kind: "asset-metadata", inserted: 1, replaced: 2 });
    expect(mine[2]).toMatchObject({ status: 'committed', rowsRead: 90, inserted: 90, kind: 'returns', userEmail: 'analyst@quillfield.example' });
  });
});
