import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type PgBoss from 'pg-boss';
import { launchBrowser, signInThroughUi, startServer } from '../helpers/browser';
import { unique } from '../helpers/app';
import { createKnex, bindModels } from '../../server/db/knex';
import { loadConfig } from '../../server/config';
import { plantedPanel } from '../../server/engine/planted';
import { createBoss } from '../../server/worker/boss';
import { registerModelFitJobs } from '../../server/worker/modelRunJob';
import { stopFitThread } from '../../server/worker/fitPool';
import { stopQueueSenders, useModelFitQueue } from '../../server/services/modelQueue';
import { businessDays } from '../helpers/returns';

/**
 * An analyst starts a fit in the browser and watches its progress bar reach the end; a second analyst approves it.
 * Real app, real database, real pg-boss worker (registered in this process as the worker process does), real Chromium.
 * The returns are an invented planted-factor panel under unique symbols.
 */
// This file's own queue: workers of other test files running at the same time never take its jobs.
useModelFitQueue(unique('model-fit-browser-'));
const N = 60;
const T = 400;
const prefix = unique('BM').toUpperCase();
const symbols = Array.from({ length: N }, (_, i) => `${prefix}${String(i).padStart(2, '0')}`);
const config = loadConfig();
const knex = createKnex(config.databaseUrl, { max: 3 });

let server: Awaited<ReturnType<typeof startServer>>;
let browser: Awaited<ReturnType<typeof launchBrowser>>;
let boss: PgBoss;
let stopSweep = () => {};
let assetIds: number[] = [];

beforeAll(async () => {
  const planted = plantedPanel({ assets: N, observations: T, factors: 3, seed: 77, noise: 'student-t' });
  const dates = businessDays(T, '2021-01-04');
  const rows = await knex('assets')
    .insert(symbols.map((symbol) => ({ symbol, name: `Invented holding ${symbol}`, sector: 'Browser test' })))
    .returning(['id', 'symbol']);
  assetIds = rows.map((r: { id: number }) => r.id);
  const ids: number[] = [];
  const ds: string[] = [];
  const vs: number[] = [];
  for (let t = 0; t < T; t++) for (let i = 0; i < N; i++) {
    ids.push(assetIds[i]);
    ds.push(dates[t]);
    vs.push(planted.panel.values[t * N + i]);
  }
  await knex.raw('INSERT INTO return_observations (asset_id, date, value) SELECT * FROM unnest(?::int[], ?::date[], ?::float8[])', [ids, ds, vs]);
  server = await startServer();
  bindModels(knex);
  boss = createBoss(config.databaseUrl);
  await boss.start();
  stopSweep = await registerModelFitJobs(boss, { log: () => {} });
  browser = await launchBrowser();
}, 120_000);

afterAll(async () => {
  stopSweep();
  await browser?.close();
  await boss?.stop({ graceful: false, wait: true }).catch(() => undefined);
  await stopQueueSenders();
  await stopFitThread();
  await server?.close();
  await knex.destroy();
}, 60_000);

describe('model runs in the browser', () => {
  it('an analyst starts a fit and watches it finish; a second analyst approves it', async () => {
    const page = await browser.context.newPage();
    await signInThroughUi(page, server.url, 'analyst');
    await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Models', exact: true }).click();
    await page.waitForURL((url) => url.pathname === '/models');
    await page.getByRole('button', { name: 'New fit' }).click();
    const form = page.getByRole('form', { name: 'New model fit' });
    await form.getByLabel('Assets', { exact: true }).selectOption('assets');
    // Typed symbols are upper-cased as the server stores them. Ten symbols first: the factors' limit follows the universe.
    const symbolsField = form.getByLabel('Symbols');
    await symbolsField.fill(symbols.slice(0, 10).join(', ').toLowerCase());
    await expect(symbolsField.inputValue()).resolves.toBe(symbols.slice(0, 10).join(', '));
    await form.getByLabel('Version label (optional)').fill(`browser ${prefix}`);
    const observations = form.getByLabel('Observations (dates)');
    await observations.fill(String(T));
    await expect(form.getByText('Each asset needs at least 30 observed dates in the window.').count()).resolves.toBe(1);
    await form.getByLabel('Weighting').selectOption('exponential');
    await form.getByLabel('Half-life (periods)').fill('250');
    // λ = 0.5^(1/250) shown beside the half-life.
    await expect.poll(() => form.getByText(/λ = 0\.5\^\(1\/h\) = 0\.997231/).count()).toBe(1);
    await form.getByLabel('Estimator').selectOption('fa');
    const factors = form.getByLabel('Factors (L)');
    // The field's maximum, its hint and its message agree: below the number of assets (10) ...
    await form.getByText('1 to 9: below the number of assets (10).').waitFor();
    await expect(factors.getAttribute('max')).resolves.toBe('9');
    await factors.fill('12');
    await form.getByRole('button', { name: 'Start fit' }).click();
    // Client-side validation explains itself before anything is sent.
    await form.getByText('at most 9 factors: factors must be below the number of assets (10)').waitFor();
    // ... and at most 30 (the server's bound) for the full 60.
    await symbolsField.fill(symbols.join(', ').toLowerCase());
    await form.getByText('1 to 30.').waitFor();
    await expect(factors.getAttribute('max')).resolves.toBe('30');
    await factors.fill(String(N + 1));
    await form.getByRole('button', { name: 'Start fit' }).click();
    await form.getByText('at most 30 factors').waitFor();
    await factors.fill('3');
    await form.getByRole('button', { name: 'Start fit' }).click();
    const queued = page.getByRole('status').filter({ hasText: 'is queued' });
    await queued.waitFor();
    const label = ((await queued.textContent()) ?? '').match(/(FA-\d{4} browser \S+) is queued/)?.[1];
    expect(label).toBeTruthy();

    // The live progress bar (polled every second) climbs to 100 %.
    const bar = page.getByRole('progressbar', { name: `Progress of ${label}` });
    const seen = new Set<number>();
    await expect
      .poll(
        async () => {
          const value = Number(await bar.getAttribute('aria-valuenow'));
          seen.add(value);
          return value;
        },
        { timeout: 90_000, interval: 200 },
      )
      .toBe(100);
    expect(Math.min(...seen)).toBeLessThan(100);
    const row = page.locator('tr', { has: bar });
    await expect.poll(() => row.getByText('succeeded').count()).toBe(1);

    // The analyst who ran it cannot approve it.
    await row.getByRole('link', { name: label! }).click();
    await page.getByRole('heading', { name: `Model ${label}` }).waitFor();
    await page.getByText('You ran this fit: a second analyst or an administrator approves it.').waitFor();
    const assetGrid = page.getByRole('region', { name: 'Model assets' });
    await assetGrid.waitFor();
    // Factor volatility (ann. %) = √(hᵢ · periods per year) × 100 from the communality shown in %² per period.
    const periodsPerYear = Number((await page.getByText(/are\s+annualised by √\d+/).textContent())?.match(/annualised by √(\d+)/)?.[1]);
    expect(periodsPerYear).toBeGreaterThan(0);
    const firstRow = assetGrid.locator('[role="row"][row-index="0"]');
    const communality = Number(await firstRow.locator('[col-id="communality"]').textContent());
    const factorVol = Number(await firstRow.locator('[col-id="factorVolatility"]').textContent());
    expect(communality).toBeGreaterThan(0);
    expect(factorVol).toBeCloseTo(Math.sqrt((communality / 1e4) * periodsPerYear) * 100, 1);
    // The loadings heatmap: standardised (correlations, fixed −1…1 scale) by default, raw on request.
    const heatmap = page.getByRole('img', { name: `Loadings of ${N} assets on 3 factors` });
    await heatmap.waitFor();
    expect(await page.getByRole('button', { name: 'Correlation with factor' }).getAttribute('aria-pressed')).toBe('true');
    expect(await heatmap.locator('rect').count()).toBe(N * 3);
    const firstCell = (await heatmap.locator('rect title').first().textContent()) ?? '';
    expect(Math.abs(Number(firstCell.split(': ').pop()))).toBeLessThanOrEqual(1);
    await page.getByRole('button', { name: 'Raw loadings' }).click();
    expect(await page.getByRole('button', { name: 'Raw loadings' }).getAttribute('aria-pressed')).toBe('true');
    // Raw loadings are in return units, written in exponent form.
    await expect.poll(async () => /: -?\d\.\d{3}e[-+]\d+$/.test((await heatmap.locator('rect title').first().textContent()) ?? '')).toBe(true);
    const modelUrl = page.url();

    // The second analyst signs in and approves it with a comment.
    await browser.context.clearCookies();
    await page.goto(`${server.url}/sign-in`);
    await page.getByLabel('E-mail').fill('analyst2@quillfield.example');
    await page.getByLabel('Password').fill('demo-analyst-pass');
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.waitForURL((url) => !url.pathname.startsWith('/sign-in'));
    await page.goto(modelUrl);
    await page.getByLabel('Approval comment').fill('Spectrum and Heywood flags checked in the browser test');
    await page.getByRole('button', { name: 'Approve this model' }).click();
    await page.getByText(/Approved by Tomas Okafor/).waitFor();
    const stored = await knex('model_runs').where({ label }).first();
    expect(stored.lifecycle).toBe('approved');
    expect(stored.approval_comment).toBe('Spectrum and Heywood flags checked in the browser test');
    await page.close();
  }, 240_000);
});
