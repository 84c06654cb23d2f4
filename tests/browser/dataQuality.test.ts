import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { openTestPage, signInThroughUi, startBrowserSuite } from '../helpers/browser';

/** The data quality page over the seeded demo (500 assets): a tall asset grid and a caution that fits history. */
let suite: Awaited<ReturnType<typeof startBrowserSuite>>;
let page: Page;

beforeAll(async () => {
  suite = await startBrowserSuite();
}, 120_000);

afterAll(async () => {
  await suite?.close();
});

beforeEach(async () => {
  page = await openTestPage(suite.context, 'data-quality');
  await signInThroughUi(page, suite.url, 'analyst');
});

describe('data quality page', () => {
  it('shows more than 13 asset rows at once and calls its figures history, not model estimates', async () => {
    await page.goto(`${suite.url}/data-quality`);
    const grid = page.getByRole('region', { name: 'Data quality by asset' });
    await grid.locator('[role="row"][row-index="20"]').first().waitFor({ state: 'attached' });
    // Data rows wholly inside the grid's viewport (the grid renders a few more than it shows; pinned columns repeat a row).
    const visibleRows = await grid.evaluate((region) => {
      const view = region.querySelector('.ag-grid-viewport')!.getBoundingClientRect();
      const inside = [...region.querySelectorAll('[role="row"][row-index]')].filter((row) => {
        const r = row.getBoundingClientRect();
        return r.height > 0 && r.top >= view.top - 0.5 && r.bottom <= view.bottom + 0.5;
      });
      return new Set(inside.map((row) => row.getAttribute('row-index'))).size;
    });
    expect(visibleRows).toBeGreaterThan(13);

    const caution = (await page.getByRole('complementary', { name: 'Caution' }).first().textContent()) ?? '';
    expect(caution).toMatch(/historical statistics of the stored returns/);
    expect(caution).toMatch(/Past volatility may not predict future volatility/);
    expect(caution).not.toMatch(/These figures are model estimates/);
    await page.close();
  });
});
