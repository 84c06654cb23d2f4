import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Page } from 'playwright-core';
import { launchBrowser, signInThroughUi, startServer } from '../helpers/browser';
import { unique } from '../helpers/app';
import { createKnex } from '../../server/db/knex';
import { loadConfig } from '../../server/config';
import { plantedPanel } from '../../server/engine/planted';
import { insertReturnSeries, removeAssets, storeFittedRun } from '../helpers/portfolioModels';
import { typeInGridCell } from '../helpers/gridEditing';

const N = 25;
const T = 180;
const prefix = unique('BP').toUpperCase();
const symbols = Array.from({ length: N }, (_, i) => `${prefix}${String(i).padStart(2, '0')}`);
const dates = Array.from({ length: T }, (_, t) => new Date(Date.UTC(2024, 5, 1 + t)).toISOString().slice(0, 10));
const knex = createKnex(loadConfig().databaseUrl, { max: 2 });

let server: Awaited<ReturnType<typeof startServer>>;
let browser: Awaited<ReturnType<typeof launchBrowser>>;
let assetIds: number[] = [];
let runId = 0;
let portfolioId = 0;

beforeAll(async () => {
  const planted = plantedPanel({ assets: N, observations: T, factors: 2, seed: 91 });
  const values = Array.from({ length: T }, (_, t) => Array.from(planted.panel.values.subarray(t * N, (t + 1) * N)));
  assetIds = await insertReturnSeries(knex, symbols, dates, values);
  runId = (await storeFittedRun(knex, { symbols, from: dates[0], to: dates[T - 1], estimator: 'fa', factors: 2 })).id;
  const pm = await knex('users').where({ email: 'pm@quillfield.example' }).first();
  const [row] = await knex('portfolios').insert({ name: `Browser fund ${prefix}`, owner_id: pm.id }).returning('id');
  portfolioId = row.id;
  await knex('portfolio_holdings').insert(symbols.slice(0, 8).map((_, j) => ({ portfolio_id: portfolioId, asset_id: assetIds[j], position: j, weight: 0.125 })));
  server = await startServer();
  browser = await launchBrowser();
});

afterAll(async () => {
  await browser?.close();
  await server?.close();
  await knex('portfolios').where({ id: portfolioId }).delete();
  await removeAssets(knex, assetIds);
  await knex.destroy();
});

const figure = (page: Page, id: string) => page.getByTestId(id).textContent();

/** Types into the what-if (or another named) holdings grid: 'value' (the weight) or 'symbol'. */
const typeWeight = (page: Page, rowIndex: number, text: string, gridName = 'What-if weights', column = 'value') => typeInGridCell(page, gridName, rowIndex, text, column);

/** Waits until the FA volatility differs from `previous` and nothing is being recomputed; returns it. */
async function volatilityChangedFrom(page: Page, previous: string | null): Promise<string | null> {
  await page.waitForFunction(
    (before) => {
      const now = document.querySelector('[data-testid="vol-fa"]')?.textContent;
      return now && now !== before && !document.body.textContent?.includes('Updating…');
    },
    previous,
    { timeout: 15_000 },
  );
  return figure(page, 'vol-fa');
}

async function signInAsPm(page: Page): Promise<void> {
  // The context is shared by the tests: sign in afresh (the sign-in page sends a signed-in user on).
  await page.context().clearCookies();
  await signInThroughUi(page, server.url, 'pm');
}

async function openRiskPage(page: Page): Promise<void> {
  await signInAsPm(page);
  await page.goto(`${server.url}/portfolios/${portfolioId}/risk?model=${runId}`);
  await page.getByTestId('vol-fa').filter({ hasText: '%' }).waitFor();
}

describe('portfolio risk page', () => {
  it('a PM sees the volatilities side by side, edits a weight and sees the figures change', async () => {
    const page = await browser.context.newPage();
    await signInThroughUi(page, server.url, 'pm');
    await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Portfolios', exact: true }).click();
    await page.getByRole('link', { name: `Risk of Browser fund ${prefix}` }).click();
    await page.waitForURL((url) => url.pathname === `/portfolios/${portfolioId}/risk`);
    // The page opens under the latest approved model; choose this test's run through the address, as model pages link.
    await page.goto(`${server.url}/portfolios/${portfolioId}/risk?model=${runId}`);
    const table = page.getByRole('table', { name: 'Predicted volatility' });
    await table.waitFor();
    await page.getByTestId('vol-sample').filter({ hasText: '%' }).waitFor();
    for (const estimator of ['Factor analysis (maximum likelihood)', 'Probabilistic PCA', 'Sample covariance', 'Ledoit–Wolf shrinkage']) {
      await expect(table.getByRole('rowheader', { name: estimator }).count()).resolves.toBe(1);
    }
    const before = { fa: await figure(page, 'vol-fa'), sample: await figure(page, 'vol-sample'), lw: await figure(page, 'vol-ledoit-wolf'), ratio: await figure(page, 'ratio-fa') };
    expect(before.fa).toMatch(/^\d+\.\d\d %$/);
    expect(before.sample).toMatch(/^\d+\.\d\d %$/);
    expect(before.ratio).toMatch(/^\d\.\d{3}$/);
    await expect(page.getByRole('complementary', { name: 'Caution' }).first().textContent()).resolves.toMatch(/model estimates, not guarantees/);

    // What-if: raise the first holding's weight from 12.5 % to 40 %.
    await page.getByRole('button', { name: 'Edit weights (what-if)' }).click();
    await typeWeight(page, 0, '40');
    await page.getByText('What-if: not saved').waitFor();
    await volatilityChangedFrom(page, before.fa);
    const after = { fa: await figure(page, 'vol-fa'), sample: await figure(page, 'vol-sample'), lw: await figure(page, 'vol-ledoit-wolf') };
    expect(after.fa).not.toBe(before.fa);
    expect(after.sample).not.toBe(before.sample);
    expect(after.lw).not.toBe(before.lw);
    await page.screenshot({ path: join(tmpdir(), 'loadline-portfolio-risk.png'), fullPage: true });

    // Nothing was saved.
    const stored = await knex('portfolio_holdings').where({ portfolio_id: portfolioId }).orderBy('position').first();
    expect(stored.weight).toBe(0.125);
    await page.close();
  });

  it('marks a what-if weight that is not a number and sends no what-if until the row is fixed', async () => {
    const page = await browser.context.newPage();
    await openRiskPage(page);
    let whatIfRequests = 0;
    page.on('request', (request) => {
      if (request.method() === 'POST' && request.url().includes('/risk/what-if')) whatIfRequests += 1;
    });
    const saved = await figure(page, 'vol-fa');
    await page.getByRole('button', { name: 'Edit weights (what-if)' }).click();
    await typeWeight(page, 0, '40');
    const valid = await volatilityChangedFrom(page, saved);
    await expect(page.getByTestId('what-if-status').textContent()).resolves.toMatch(/What-if figures for the edited weights, not saved.*Edited weights sum to 127\.50 %/);
    // Every figure card says it shows the what-if, not only the settings.
    await expect(page.getByRole('heading', { name: /Predicted volatility, side by side \(annualised\)\s*What-if/ }).count()).resolves.toBe(1);
    await expect(page.getByRole('heading', { name: /Value at risk and expected shortfall.*What-if/ }).count()).resolves.toBe(1);

    // A weight that is not a number stays visible, is named on its row and above the figures, and nothing is sent.
    const requestsBefore = whatIfRequests;
    await typeWeight(page, 1, 'abc');
    const grid = page.getByRole('region', { name: 'What-if weights' });
    const row = grid.locator('[role="row"][row-index="1"]');
    await expect.poll(() => row.locator('[col-id="value"]').textContent()).toBe('abc');
    await expect.poll(() => row.locator('[col-id="problems"]').textContent()).toBe('weight “abc” is not a number');
    const status = page.getByTestId('what-if-status');
    await status.getByText('Fix the marked rows to update the figures').waitFor();
    await expect(status.textContent()).resolves.toContain(`row 2 (${symbols[1]}): weight “abc” is not a number`);
    // Longer than the 350 ms debounce: the figures stay those of the last valid weights and no request went out.
    await page.waitForTimeout(1200);
    expect(whatIfRequests).toBe(requestsBefore);
    await expect(figure(page, 'vol-fa')).resolves.toBe(valid);
    expect(await page.getByText('Updating…').count()).toBe(0);
    await page.screenshot({ path: join(tmpdir(), 'loadline-portfolio-risk-invalid-weight.png'), fullPage: true });

    // Fixed: the figures follow again.
    await typeWeight(page, 1, '20');
    const fixed = await volatilityChangedFrom(page, valid);
    expect(fixed).not.toBe(valid);
    expect(whatIfRequests).toBeGreaterThan(requestsBefore);
    await expect.poll(() => row.locator('[col-id="problems"]').textContent()).toBe('');
    await expect(page.getByTestId('what-if-status').textContent()).resolves.toMatch(/Edited weights sum to 135\.00 %/);

    // A symbol only the server can judge: its answer is shown on the row holding that symbol.
    const unknown = `${prefix}ZZ`;
    await typeWeight(page, 2, unknown, 'What-if weights', 'symbol');
    await page.getByText('The what-if weights cannot be evaluated').waitFor({ timeout: 15_000 });
    const third = grid.locator('[role="row"][row-index="2"]');
    await expect.poll(() => third.locator('[col-id="problems"]').textContent()).toBe(`unknown symbol '${unknown}'`);
    await page.close();
  });

  it('keeps the horizon as typed: cleared and retyped to 5 gives 5 trading days; out-of-range values are clamped with a message', async () => {
    const page = await browser.context.newPage();
    await openRiskPage(page);
    const varTitle = (text: string) => page.getByRole('heading', { name: `Value at risk and expected shortfall, ${text}`, exact: true });
    await varTitle('1 trading day').waitFor();
    const horizon = page.getByLabel('Horizon (trading days)');
    await horizon.click();
    await horizon.press('End');
    await horizon.press('Backspace');
    await expect(horizon.inputValue()).resolves.toBe('');
    await horizon.pressSequentially('5');
    await expect(horizon.inputValue()).resolves.toBe('5');
    await horizon.press('Enter');
    await varTitle('5 trading days').waitFor({ timeout: 15_000 });
    await expect(horizon.inputValue()).resolves.toBe('5');

    await horizon.fill('300');
    await horizon.press('Tab');
    await page.getByText('The horizon runs from 1–260: 300 was set to 260.').waitFor();
    await expect(horizon.inputValue()).resolves.toBe('260');
    await varTitle('260 trading days').waitFor({ timeout: 15_000 });
    await page.close();
  });

  it('a portfolio that does not exist shows only the not-found message', async () => {
    const page = await browser.context.newPage();
    await signInAsPm(page);
    await page.goto(`${server.url}/portfolios/999999999/risk`);
    await page.getByRole('heading', { name: 'Portfolio not found' }).waitFor();
    expect(await page.getByText('Model and settings').count()).toBe(0);
    expect(await page.getByRole('button', { name: 'Edit weights (what-if)' }).count()).toBe(0);
    await page.close();
  });

  it('the holdings editor keeps a weight that is not a number, names it on its row and will not save', async () => {
    const page = await browser.context.newPage();
    await signInAsPm(page);
    await page.goto(`${server.url}/portfolios/${portfolioId}`);
    await typeWeight(page, 2, '12,5x', 'Holdings');
    const row = page.getByRole('region', { name: 'Holdings' }).locator('[role="row"][row-index="2"]');
    await expect.poll(() => row.locator('[col-id="value"]').textContent()).toBe('12,5x');
    await expect.poll(() => row.locator('[col-id="problems"]').textContent()).toBe('weight “12,5x” is not a number');
    await expect(page.getByRole('button', { name: 'Save holdings' }).isDisabled()).resolves.toBe(true);
    const stored = await knex('portfolio_holdings').where({ portfolio_id: portfolioId }).orderBy('position');
    expect(stored.map((h) => h.weight)).toEqual(Array(8).fill(0.125));
    await page.close();
  });
});
