// A published dataset through the real import path: R's datasets::EuStockMarkets (daily closing prices of the
// DAX, SMI, CAC and FTSE, 1991–1998; exported by tests/reference/export_eustockmarkets.R) imported as prices.
// The stored returns are checked against an independent numpy computation
// (tests/reference/eustock_logreturns.py → tests/reference/fixtures/eustockmarkets_returns.json) to 1e-12.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import request from 'supertest';
import { testContext, signIn, unique } from '../helpers/app';
import { FIXTURES, seriesOf, storedFor, upload } from '../helpers/imports';

const reference = JSON.parse(readFileSync(join(import.meta.dirname, '..', 'reference', 'fixtures', 'eustockmarkets_returns.json'), 'utf8')) as {
  dates: string[];
  series: Record<string, { log: number[]; simple: number[] }>;
};
const INDICES = ['DAX', 'SMI', 'CAC', 'FTSE'];
const ctx = testContext();
let analyst: string;
beforeAll(async () => {
  analyst = await signIn(ctx.app, 'analyst');
});
afterAll(() => ctx.close());

describe('EuStockMarkets imported as prices', () => {
  it('stores returns equal to numpy’s to 1e-12, as simple and as log returns', async () => {
    // The published column names get a prefix unique to this run (the shared test database may hold them).
    const p = unique('E').toUpperCase().slice(0, 10);
    const text = readFileSync(join(FIXTURES, 'eustockmarkets.csv'), 'utf8');
    const [header, ...rows] = text.split('\n');
    const path = join(tmpdir(), `${p}-eustockmarkets.csv`);
    writeFileSync(path, [header.split(',').map((h, i) => (i === 0 ? h : `${p}${h}`)).join(','), ...rows].join('\n'));

    const res = await upload(ctx.app, analyst, path, { mode: 'commit', format: 'wide', valueKind: 'price', overlap: 'reject' });
    expect(res.status, JSON.stringify(res.body).slice(0, 400)).toBe(201);
    expect(res.body.counts).toMatchObject({ rowsRead: 1860, valuesRead: 7440, firstPrices: 4, inserted: 7436, assetsNew: 4 });
    expect(await storedFor(ctx.knex, p)).toEqual({ assets: 4, observations: 7436, revisions: 0 });

    for (const index of INDICES) {
      const stored = await seriesOf(ctx.knex, `${p}${index}`);
      const expected = reference.series[index];
      expect(stored.map((s) => s.date)).toEqual(reference.dates);
      let worstSimple = 0;
      let worstLog = 0;
      stored.forEach((s, t) => {
        worstSimple = Math.max(worstSimple, Math.abs(s.value - expected.simple[t]));
        worstLog = Math.max(worstLog, Math.abs(Math.log1p(s.value) - expected.log[t]));
      });
      expect(worstSimple).toBeLessThan(1e-12);
      expect(worstLog).toBeLessThan(1e-12);

      // The API's log view of the same series.
      const api = await request(ctx.app).get(`/api/assets/by-symbol/${p}${index}/returns?kind=log`).set('Authorization', `Bearer ${analyst}`);
      expect(api.status).toBe(200);
      expect(api.body.observations).toHaveLength(1859);
      const worstApi = Math.max(...api.body.observations.map((o: { value: number }, t: number) => Math.abs(o.value - expected.log[t])));
      expect(worstApi).toBeLessThan(1e-12);
    }
  });
});
