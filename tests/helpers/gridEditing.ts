import { expect } from 'vitest';
import type { Page } from 'playwright-core';

/**
 * Opens an editable grid's editor on one cell (a click can land while the grid still settles), types, presses Enter.
 * `gridName`: the grid region's accessible name; `column`: the cell's col-id ('value' for a weight, 'symbol').
 */
export async function typeInGridCell(page: Page, gridName: string, rowIndex: number, text: string, column = 'value'): Promise<void> {
  const grid = page.getByRole('region', { name: gridName });
  const cell = grid.locator(`[role="row"][row-index="${rowIndex}"] [role="gridcell"][col-id="${column}"]`);
  const editor = cell.locator('input');
  await expect
    .poll(
      async () => {
        if (!(await editor.isVisible())) await cell.click();
        return editor.isVisible();
      },
      { timeout: 15_000, interval: 500 },
    )
    .toBe(true);
  await editor.fill(text);
  await editor.press('Enter');
}
