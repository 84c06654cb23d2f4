import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import type { Page } from 'playwright-core';
import { openTestPage, signInThroughUi, startBrowserSuite } from '../helpers/browser';
import { unique } from '../helpers/app';
import { createKnex } from '../../server/db/knex';
import { loadConfig } from '../../server/config';

/** The audit page shows an event's details as key: value pairs; the CSV export keeps the JSON. */
const knex = createKnex(loadConfig().databaseUrl, { max: 2 });
const listName = `Audit details ${unique('AD')}`;

let suite: Awaited<ReturnType<typeof startBrowserSuite>>;
let page: Page;
let listId = 0;

beforeAll(async () => {
  suite = await startBrowserSuite();
}, 120_000);

afterAll(async () => {
  await suite?.close();
  await knex('asset_lists').where({ id: listId }).delete();
  await knex.destroy();
});

beforeEach(async () => {
  page = await openTestPage(suite.context, 'audit-details');
});

describe('audit details', () => {
  it('reads as key: value pairs in the grid and stays JSON in the CSV', async () => {
    // A real audited action: an analyst saves an asset list of two demo assets.
    await signInThroughUi(page, suite.url, 'analyst');
    const symbols = (await knex('assets').orderBy('id').limit(2).pluck('symbol')) as string[];
    const created = await page.request.post(`${suite.url}/api/asset-lists`, { data: { name: listName, symbols } });
    expect(created.status()).toBe(201);
    listId = (await created.json()).id;

    await page.context().clearCookies();
    await signInThroughUi(page, suite.url, 'compliance');
    await page.goto(`${suite.url}/audit?objectType=asset-list&objectId=${listId}`);
    const details = page.getByRole('region', { name: 'Audit events' }).locator('[role="gridcell"][col-id="details"]');
    await expect.poll(() => details.allTextContents()).toEqual([`name: ${listName}; size: 2`]);

    const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('button', { name: 'Export CSV' }).click()]);
    const lines = readFileSync((await download.path())!, 'utf8').trim().split('\n');
    expect(lines).toHaveLength(2);
    expect(lines[1]).toContain(`"{""name"":""${listName}"",""size"":2}"`);
    await page.close();
  });
});
