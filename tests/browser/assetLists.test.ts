import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchBrowser, signInThroughUi, startServer } from '../helpers/browser';
import { unique } from '../helpers/app';
import { createKnex } from '../../server/db/knex';
import { loadConfig } from '../../server/config';
import { stopQueueSenders, useModelFitQueue } from '../../server/services/modelQueue';
import { plantedPanel } from '../../server/engine/planted';

/**
 * An analyst saves typed symbols as a named list from the new-fit form, then queues a fit over that saved list.
 * Real app, real database, real Chromium. No worker is needed: the test checks the queued run's universe.
 * The returns are an invented planted-factor panel under unique symbols.
 */
useModelFitQueue(unique('model-fit-lists-browser-'));
const prefix = unique('BL').toUpperCase();
const symbols = Array.from({ length: 4 }, (_, i) => `${prefix}${i}`);
const config = loadConfig();
const knex = createKnex(config.databaseUrl, { max: 2 });

let server: Awaited<ReturnType<typeof startServer>>;
let browser: Awaited<ReturnType<typeof launchBrowser>>;

beforeAll(async () => {
  const rows: { id: number }[] = await knex('assets')
    .insert(symbols.map((symbol) => ({ symbol, name: `Invented holding ${symbol}`, sector: 'Browser test' })))
    .returning(['id']);
  const T = 40;
  const planted = plantedPanel({ assets: symbols.length, observations: T, factors: 1, seed: 78 });
  const ids: number[] = [];
  const ds: string[] = [];
  const vs: number[] = [];
  for (let t = 0; t < T; t++) for (let i = 0; i < symbols.length; i++) {
    ids.push(rows[i].id);
    ds.push(new Date(Date.UTC(2022, 0, 3 + t)).toISOString().slice(0, 10));
    vs.push(planted.panel.values[t * symbols.length + i]);
  }
  await knex.raw('INSERT INTO return_observations (asset_id, date, value) SELECT * FROM unnest(?::int[], ?::date[], ?::float8[])', [ids, ds, vs]);
  server = await startServer();
  browser = await launchBrowser();
}, 120_000);

afterAll(async () => {
  await browser?.close();
  await stopQueueSenders();
  await server?.close();
  await knex.destroy();
}, 60_000);

describe('saved asset lists in the new-fit form', () => {
  it('saves typed symbols as a list, refuses an unknown symbol by name, and queues a fit over the list', async () => {
    const page = await browser.context.newPage();
    await signInThroughUi(page, server.url, 'analyst');
    await page.goto(`${server.url}/models`);
    await page.getByRole('button', { name: 'New fit' }).click();
    const form = page.getByRole('form', { name: 'New model fit' });
    await form.getByLabel('Assets', { exact: true }).selectOption('assets');
    const name = `List ${prefix}`;

    await form.getByLabel('Symbols').fill(`${symbols.join(', ')}, NOSUCH${prefix}`);
    await form.getByLabel('Name for a saved list').fill(name);
    await form.getByRole('button', { name: 'Save list' }).click();
    await form.getByRole('alert').filter({ hasText: `row 5: unknown symbol NOSUCH${prefix}` }).waitFor();
    expect(await knex('asset_lists').where({ name })).toHaveLength(0);

    await form.getByLabel('Symbols').fill(symbols.join(', '));
    await form.getByRole('button', { name: 'Save list' }).click();
    await form.getByRole('status').filter({ hasText: `Saved as “${name}” (4 assets)` }).waitFor();
    const [saved] = await knex('asset_lists').where({ name });
    expect(saved).toBeTruthy();

    await form.getByLabel('Assets', { exact: true }).selectOption('list');
    const listSelect = form.getByLabel('Saved list');
    await expect.poll(() => listSelect.inputValue()).toBe(String(saved.id));
    await form.getByLabel('Estimator').selectOption('sample');
    await form.getByLabel('Observations (dates)').fill('30');
    await form.getByLabel('Version label (optional)').fill(`list ${prefix}`);
    await form.getByRole('button', { name: 'Start fit' }).click();
    const queued = page.getByRole('status').filter({ hasText: 'is queued' });
    await queued.waitFor();
    const run = await knex('model_runs').whereRaw(`parameters->>'label' = ?`, [`list ${prefix}`]).first();
    expect(run.parameters.universe).toEqual({ kind: 'list', listId: saved.id });
    expect(run.status).toBe('queued');
    await page.close();
  }, 120_000);
});
