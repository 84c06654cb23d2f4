// Upload → preview → commit → data-quality grid, in Debian's headless Chromium against the real app and database.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Knex } from 'knex';
import type { Page } from 'playwright-core';
import { launchBrowser, signInThroughUi, startServer } from '../helpers/browser';
import { unique } from '../helpers/app';
import { fixtureCopy, storedFor } from '../helpers/imports';
import { loadConfig } from '../../server/config';
import { createKnex } from '../../server/db/knex';

let server: Awaited<ReturnType<typeof startServer>>;
let browser: Awaited<ReturnType<typeof launchBrowser>>;
let knex: Knex;
let page: Page;

beforeAll(async () => {
  knex = createKnex(loadConfig().databaseUrl, { max: 2 });
  server = await startServer();
  browser = await launchBrowser();
  page = await browser.context.newPage();
  await page.goto(`${server.url}/sign-in`, { timeout: 90_000 });
  await page.getByLabel('E-mail').waitFor({ timeout: 90_000 });
});
afterAll(async () => {
  await browser?.close();
  await server?.close();
  await knex?.destroy();
});

describe('importing return series in the browser', () => {
  it('an analyst uploads, previews, commits and finds the assets in the data-quality grid', async () => {
    const prefix = unique('Q').toUpperCase().slice(0, 12);
    const file = fixtureCopy('long-simple-decimal.csv', prefix);
    await signInThroughUi(page, server.url, 'analyst');
    await page.getByRole('link', { name: 'Import returns' }).first().click();
    await page.getByRole('heading', { name: 'Import return series' }).waitFor();

    await page.getByLabel('CSV file').setInputFiles(file);
    await expect(page.getByLabel('Chosen file').textContent()).resolves.toContain(`${prefix}-long-simple-decimal.csv`);
    await page.getByLabel('Already stored dates').selectOption('skip');
    await page.getByRole('button', { name: 'Preview' }).click();

    // The preview: figures, first rows as parsed, nothing stored yet.
    const summary = page.getByLabel('Import summary');
    await summary.waitFor({ timeout: 60_000 });
    await expect(summary.textContent()).resolves.toMatch(/Rows read\s*90/);
    await expect(summary.textContent()).resolves.toMatch(/3 \(3 new\)/);
    await expect(summary.textContent()).resolves.toMatch(/daily \(detected\)/);
    await page.getByLabel('First rows as parsed').getByText(`${prefix}AAA`).first().waitFor();
    await expect(page.getByLabel('Upload').getAttribute('value')).resolves.toBe('1');
    expect(await storedFor(knex, prefix)).toEqual({ assets: 0, observations: 0, revisions: 0 });

    await page.getByRole('button', { name: 'Commit import' }).click();
    await page.getByText('Import committed').waitFor({ timeout: 60_000 });
    expect(await storedFor(knex, prefix)).toEqual({ assets: 3, observations: 90, revisions: 0 });

    await page.getByRole('link', { name: 'See data quality' }).click();
    await page.getByRole('heading', { name: 'Data quality' }).waitFor();
    const grid = page.getByRole('region', { name: 'Data quality by asset' });
    await grid.getByLabel('Search the table').fill(prefix);
    await grid.getByText(`${prefix}BBB`).first().waitFor({ timeout: 30_000 });
    const row = grid.locator('.ag-row', { hasText: `${prefix}BBB` }).first();
    await expect(row.textContent()).resolves.toContain('2024-01-02');
    await expect(row.textContent()).resolves.toContain('30');
    // Edit the asset's metadata from its row.
    await row.click();
    const meta = page.getByRole('form', { name: 'Asset metadata' });
    await meta.getByLabel('Sector').fill('Utilities');
    await meta.getByLabel('Currency').fill('eur');
    await meta.getByRole('button', { name: 'Save metadata' }).click();
    await meta.getByText('three capital letters (ISO 4217)').waitFor();
    await meta.getByLabel('Currency').fill('EUR');
    await meta.getByRole('button', { name: 'Save metadata' }).click();
    await meta.getByText('Saved.').waitFor();
    expect(await knex('assets').where({ symbol: `${prefix}BBB` }).first()).toMatchObject({ sector: 'Utilities', currency: 'EUR' });

    const heatmap = page.getByRole('img', { name: /Coverage heatmap/ });
    await heatmap.waitFor();
    // The heatmap takes up room on the page (its container grows with it) and holds a cell per asset and month.
    const layout = await heatmap.evaluate((svg) => ({ box: svg.parentElement!.getBoundingClientRect().height, cells: svg.querySelectorAll('.visx-heatmap-rect').length }));
    expect(layout.box).toBeGreaterThan(300);
    expect(layout.cells).toBeGreaterThan(300 * 40);
  });

  it('the preview marks the asset unknown to the database as new, in the figures and as a word in the assets grid', async () => {
    const prefix = unique('QN').toUpperCase();
    const known = `${prefix}KNOWN`;
    const fresh = `${prefix}NEWX`;
    await knex('assets').insert({ symbol: known, name: `Invented holding ${known}` });
    // A bad value on row 3 too: an error must not hide which asset is new.
    const file = join(tmpdir(), `${prefix}-new-and-known.csv`);
    writeFileSync(file, `date,symbol,value\n2019-05-06,${fresh},0.01\n2019-05-06,${known},abc\n2019-05-07,${fresh},0.02\n2019-05-07,${known},0.01\n`);
    try {
      await page.goto(`${server.url}/imports`);
      // Signed in by the first test; run alone (-t), this test signs in itself.
      await page.getByLabel('CSV file').or(page.getByLabel('E-mail')).first().waitFor({ timeout: 60_000 });
      if (await page.getByLabel('E-mail').isVisible()) {
        await signInThroughUi(page, server.url, 'analyst');
        await page.goto(`${server.url}/imports`);
      }
      await page.getByLabel('CSV file').setInputFiles(file);
      await page.getByRole('button', { name: 'Preview' }).click();
      const summary = page.getByLabel('Import summary');
      await summary.waitFor({ timeout: 60_000 });
      await expect(summary.textContent()).resolves.toMatch(/Assets found\s*2 \(1 new\)/);
      const grid = page.getByRole('region', { name: 'Assets in the file' });
      const newRow = grid.locator('.ag-row', { hasText: fresh }).first();
      await newRow.waitFor({ timeout: 30_000 });
      const knownRow = grid.locator('.ag-row', { hasText: known }).first();
      await expect(newRow.locator('[col-id="isNew"]').innerText()).resolves.toContain('new');
      await expect(knownRow.locator('[col-id="isNew"]').innerText()).resolves.toContain('known');
      // Words, not checkboxes.
      await expect(grid.locator('[col-id="isNew"] input[type="checkbox"]').count()).resolves.toBe(0);
      expect(await storedFor(knex, prefix)).toEqual({ assets: 1, observations: 0, revisions: 0 });
    } finally {
      await knex('assets').where({ symbol: known }).delete();
    }
  });

  it('a file with errors shows the problems with row and column, and cannot be committed', async () => {
    const prefix = unique('Q').toUpperCase().slice(0, 12);
    await page.goto(`${server.url}/imports`);
    // Dropped onto the drop zone this time (a real DataTransfer carrying the file).
    const text = readFileSync(fixtureCopy('bad-dates.csv', prefix), 'utf8');
    const dataTransfer = await page.evaluateHandle((csv) => {
      const transfer = new DataTransfer();
      transfer.items.add(new File([csv], 'dropped-bad-dates.csv', { type: 'text/csv' }));
      return transfer;
    }, text);
    await page.getByTestId('drop-zone').dispatchEvent('drop', { dataTransfer });
    await expect(page.getByLabel('Chosen file').textContent()).resolves.toContain('dropped-bad-dates.csv');
    await page.getByRole('button', { name: 'Preview' }).click();
    const problems = page.getByRole('list', { name: 'Problems' });
    await problems.waitFor({ timeout: 60_000 });
    await expect(problems.textContent()).resolves.toContain('row 3 · date');
    await expect(problems.textContent()).resolves.toContain('day 30 does not exist');
    await expect(page.getByRole('button', { name: 'Commit import' }).isDisabled()).resolves.toBe(true);
    const download = page.waitForEvent('download');
    await page.getByRole('button', { name: 'Download all problems (CSV)' }).click();
    expect((await download).suggestedFilename()).toMatch(/^loadline-import-\d+-problems\.csv$/);
    expect(await storedFor(knex, prefix)).toEqual({ assets: 0, observations: 0, revisions: 0 });
  });
});
