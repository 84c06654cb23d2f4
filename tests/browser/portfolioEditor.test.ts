import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { openTestPage, signInThroughUi, startBrowserSuite } from '../helpers/browser';
import { unique } from '../helpers/app';
import { createKnex } from '../../server/db/knex';
import { loadConfig } from '../../server/config';
import { typeInGridCell } from '../helpers/gridEditing';

const knex = createKnex(loadConfig().databaseUrl, { max: 2 });
const name = `Editor fund ${unique('ED')}`;

let suite: Awaited<ReturnType<typeof startBrowserSuite>>;
let page: Page;
let portfolioId = 0;

beforeAll(async () => {
  // Four demo assets, read only; the portfolio is this file's own.
  const assets = await knex('assets').orderBy('id').limit(4);
  const pm = await knex('users').where({ email: 'pm@quillfield.example' }).first();
  const [row] = await knex('portfolios').insert({ name, owner_id: pm.id }).returning('id');
  portfolioId = row.id;
  await knex('portfolio_holdings').insert(assets.map((a, j) => ({ portfolio_id: portfolioId, asset_id: a.id, position: j, weight: 0.25 })));
  suite = await startBrowserSuite();
}, 120_000);

afterAll(async () => {
  await suite?.close();
  await knex('portfolios').where({ id: portfolioId }).delete();
  await knex.destroy();
});

beforeEach(async () => {
  page = await openTestPage(suite.context, 'portfolio-editor');
  await signInThroughUi(page, suite.url, 'pm');
  await page.goto(`${suite.url}/portfolios/${portfolioId}`);
  await page.getByRole('region', { name: 'Holdings' }).locator('[role="row"][row-index="3"]').waitFor();
});

const holdingsRow = (rowIndex: number) => page.getByRole('region', { name: 'Holdings' }).locator(`[role="row"][row-index="${rowIndex}"]`);

const typeInCell = (rowIndex: number, text: string, column = 'value') => typeInGridCell(page, 'Holdings', rowIndex, text, column);

const storedWeights = async () => (await knex('portfolio_holdings').where({ portfolio_id: portfolioId }).orderBy('position')).map((h) => h.weight);
const navLink = (label: string) => page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: label, exact: true });

describe('holdings editor', () => {
  it('asks before leaving with an edited weight; staying keeps the edit, leaving drops it', async () => {
    const reason = page.getByTestId('save-holdings-reason');
    await expect(reason.textContent()).resolves.toBe('Nothing changed since the last save.');
    await expect(page.getByRole('button', { name: 'Save holdings' }).isDisabled()).resolves.toBe(true);

    await typeInCell(0, '30');
    await page.getByText('Unsaved changes').waitFor();
    await expect.poll(() => reason.count()).toBe(0);

    await navLink('Portfolios').click();
    const dialog = page.getByRole('dialog', { name: 'Leave with unsaved holdings?' });
    await dialog.waitFor();
    await dialog.getByRole('button', { name: 'Stay and keep editing' }).click();
    await dialog.waitFor({ state: 'hidden' });
    expect(new URL(page.url()).pathname).toBe(`/portfolios/${portfolioId}`);
    await expect.poll(() => holdingsRow(0).locator('[col-id="value"]').textContent()).toBe('30.0000');
    await expect(page.getByText('Unsaved changes').count()).resolves.toBe(1);

    await navLink('Portfolios').click();
    await dialog.waitFor();
    await dialog.getByRole('button', { name: 'Leave without saving' }).click();
    await page.waitForURL((url) => url.pathname === '/portfolios');
    expect(await storedWeights()).toEqual([0.25, 0.25, 0.25, 0.25]);
    await page.close();
  });

  it('says why Save is disabled, and Add row puts the focus on the new row’s symbol', async () => {
    await typeInCell(1, 'abc');
    await expect.poll(() => page.getByTestId('save-holdings-reason').textContent()).toBe('1 row has problems: fix the marked rows to save.');
    await expect(page.getByRole('button', { name: 'Save holdings' }).isDisabled()).resolves.toBe(true);

    await page.getByRole('button', { name: 'Add row' }).click();
    const focused = () =>
      page.evaluate(() => {
        const cell = document.activeElement?.closest('[role="gridcell"]');
        return cell ? `${cell.closest('[role="row"]')?.getAttribute('row-index')}:${cell.getAttribute('col-id')}` : null;
      });
    await expect.poll(focused).toBe('4:symbol');
    // Typing goes straight into the focused symbol cell.
    await page.keyboard.type('zz');
    await page.keyboard.press('Enter');
    await expect.poll(() => holdingsRow(4).locator('[col-id="symbol"]').textContent()).toBe('ZZ');
    await expect.poll(() => page.getByTestId('save-holdings-reason').textContent()).toBe('2 rows have problems: fix the marked rows to save.');

    // Closing the tab with unsaved changes: the browser asks first (beforeunload).
    const asked = new Promise<string>((resolve) => page.once('dialog', (d) => (resolve(d.type()), void d.dismiss())));
    await page.close({ runBeforeUnload: true });
    await expect(asked).resolves.toBe('beforeunload');
    expect(await storedWeights()).toEqual([0.25, 0.25, 0.25, 0.25]);
    await page.close();
  });
});
