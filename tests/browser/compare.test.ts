import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { openTestPage, signInThroughUi, startBrowserSuite } from '../helpers/browser';
import { unique } from '../helpers/app';
import { createKnex } from '../../server/db/knex';
import { loadConfig } from '../../server/config';
import { plantedPanel } from '../../server/engine/planted';
import { insertReturnSeries, removeAssets, storeFittedRun } from '../helpers/portfolioModels';

/**
 * The compare page's note on large principal angles. Invented returns: two planted 2-factor panels with different
 * seeds, one after the other on the same symbols, so a fit on each half spans unrelated directions (large angles),
 * while FA and PPCA on the same half span nearly the same ones (small angles).
 */
const N = 20;
const T = 120;
const prefix = unique('CP').toUpperCase();
const symbols = Array.from({ length: N }, (_, i) => `${prefix}${String(i).padStart(2, '0')}`);
const dates = Array.from({ length: 2 * T }, (_, t) => new Date(Date.UTC(2023, 0, 2 + t)).toISOString().slice(0, 10));
const knex = createKnex(loadConfig().databaseUrl, { max: 2 });

let suite: Awaited<ReturnType<typeof startBrowserSuite>>;
let page: Page;
let assetIds: number[] = [];
const runs = { firstFa: 0, firstPpca: 0, secondFa: 0 };

beforeAll(async () => {
  const halves = [plantedPanel({ assets: N, observations: T, factors: 2, seed: 311 }), plantedPanel({ assets: N, observations: T, factors: 2, seed: 733 })];
  const values = halves.flatMap((h) => Array.from({ length: T }, (_, t) => Array.from(h.panel.values.subarray(t * N, (t + 1) * N))));
  assetIds = await insertReturnSeries(knex, symbols, dates, values);
  runs.firstFa = (await storeFittedRun(knex, { symbols, from: dates[0], to: dates[T - 1], estimator: 'fa', factors: 2 })).id;
  runs.firstPpca = (await storeFittedRun(knex, { symbols, from: dates[0], to: dates[T - 1], estimator: 'ppca', factors: 2 })).id;
  runs.secondFa = (await storeFittedRun(knex, { symbols, from: dates[T], to: dates[2 * T - 1], estimator: 'fa', factors: 2 })).id;
  suite = await startBrowserSuite();
}, 120_000);

afterAll(async () => {
  await suite?.close();
  await knex('model_results').whereIn('run_id', Object.values(runs)).delete();
  await knex('model_runs').whereIn('id', Object.values(runs)).delete();
  await removeAssets(knex, assetIds);
  await knex.destroy();
});

beforeEach(async () => {
  page = await openTestPage(suite.context, 'compare');
  await signInThroughUi(page, suite.url, 'analyst');
});

const angles = async () => {
  const list = page.getByRole('list', { name: 'Principal angles' });
  await list.waitFor();
  return (await list.getByRole('listitem').allTextContents()).map((t) => Number(t.match(/= ([\d.]+)°/)?.[1]));
};

describe('compare page', () => {
  it('notes a largest principal angle above 45°: a direction without counterpart', async () => {
    await page.goto(`${suite.url}/models/compare?first=${runs.firstFa}&second=${runs.secondFa}`);
    const largest = Math.max(...(await angles()));
    expect(largest).toBeGreaterThan(45);
    const note = page.getByTestId('largest-angle-note');
    const text = (await note.textContent()) ?? '';
    expect(text).toMatch(/^The largest angle is \d+\.\d°, above 45°: a direction in one model has little or no counterpart in the other \(near 90°, none\)\.$/);
    expect(Number(text.match(/is ([\d.]+)°/)?.[1])).toBeCloseTo(largest, 0);
    await page.close();
  });

  it('says nothing more when every angle is 45° or less', async () => {
    await page.goto(`${suite.url}/models/compare?first=${runs.firstFa}&second=${runs.firstPpca}`);
    expect(Math.max(...(await angles()))).toBeLessThanOrEqual(45);
    expect(await page.getByTestId('largest-angle-note').count()).toBe(0);
    // Communalities in squared percent per period, as on the model page, and the change is second − first.
    // The row of the first asset (the symbol column is pinned, so its cells sit in another row element).
    const row = page.locator('[role="row"][row-index="0"]').filter({ has: page.locator('[col-id="communalityFirst"]') });
    await row.waitFor();
    const cell = async (col: string) => ((await row.locator(`[col-id="${col}"]`).textContent()) ?? '').trim();
    await expect.poll(() => cell('communalityFirst')).toMatch(/^\d+\.\d{4}$/);
    const [a, b, change] = [Number(await cell('communalityFirst')), Number(await cell('communalitySecond')), Number((await cell('communalityChange')).replace('−', '-'))];
    expect(change).toBeCloseTo(b - a, 3);
    await page.close();
  });
});
