import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import type { BrowserContext, Page } from 'playwright-core';
import { openTestPage, signInThroughUi, startBrowserSuite } from '../helpers/browser';
import { demoUser, unique } from '../helpers/app';
import { createKnex } from '../../server/db/knex';
import { loadConfig } from '../../server/config';
import { DEMO_USERS } from '../../server/demo/users';

/**
 * The Asset lists page end to end (real app, real database, Debian's Chromium): an analyst saves a list from typed
 * symbols (an unknown symbol is refused by row and name first), reads its assets in the order typed and deletes it
 * after confirming; a portfolio manager reads a list and its fits without create or delete controls.
 * Assets, names and symbols are invented and unique to this run.
 */
const prefix = unique('AP').toUpperCase().replace(/[^A-Z0-9]/g, '');
const symbols = Array.from({ length: 4 }, (_, i) => `${prefix}${String.fromCharCode(65 + i)}`);
const fixtureListName = `Fixture list ${prefix}`;
const runLabel = `lists-page ${prefix}`.slice(0, 60);
const knex = createKnex(loadConfig().databaseUrl, { max: 2 });

let suite: Awaited<ReturnType<typeof startBrowserSuite>>;
let context: BrowserContext;
let page: Page;
let assetIds: number[] = [];
let fixtureListId = 0;

beforeAll(async () => {
  const rows: { id: number }[] = await knex('assets')
    .insert(symbols.map((symbol, i) => ({ symbol, name: `Invented holding ${i + 1} ${prefix}`, sector: `Sector ${i % 2 ? 'Odd' : 'Even'} ${prefix}` })))
    .returning('id');
  assetIds = rows.map((r) => r.id);
  // A list the first analyst owns, and a finished (cancelled) fit over it, for the read-only views.
  const analyst = await knex('users').where({ email: demoUser('analyst').email }).first('id');
  const [list] = await knex('asset_lists').insert({ name: fixtureListName, owner_id: analyst.id, description: 'Seeded by the page test' }).returning('id');
  fixtureListId = list.id;
  await knex('asset_list_members').insert([assetIds[3], assetIds[1]].map((asset_id, position) => ({ list_id: fixtureListId, asset_id, position })));
  await knex('model_runs').insert({
    label: runLabel,
    estimator: 'sample',
    parameters: JSON.stringify({ label: runLabel, universe: { kind: 'list', listId: fixtureListId }, window: { kind: 'last', observations: 30 }, weighting: { kind: 'equal' }, mean: 'sample', estimator: 'sample', missing: 'em' }),
    status: 'cancelled',
    error: 'cancelled by the page test',
    created_by: analyst.id,
  });
  suite = await startBrowserSuite();
  context = suite.context;
}, 180_000);

afterAll(async () => {
  await suite?.close();
  await knex('model_runs').where({ label: runLabel }).delete();
  await knex('asset_lists').whereIn('id', knex('asset_list_members').whereIn('asset_id', assetIds).select('list_id')).delete();
  await knex('assets').whereIn('id', assetIds).delete();
  await knex.destroy();
}, 60_000);

beforeEach(async () => {
  page = await openTestPage(context, 'asset-lists-page');
});

const listsGrid = () => page.getByRole('region', { name: 'Asset lists', exact: true });
/** Text of one column's cells in a grid, in the order shown. */
const column = (grid: ReturnType<Page['getByRole']>, colId: string) => grid.locator(`[role="gridcell"][col-id="${colId}"]`).allTextContents();

/** Signs in as a demo user (the second analyst has no role of its own in signInThroughUi) and opens the page from the rail. */
async function openPage(role: 'analyst' | 'pm' | 'analyst2') {
  if (role === 'analyst2') {
    await page.goto(`${suite.url}/sign-in`);
    const second = DEMO_USERS.find((u) => u.email === 'analyst2@quillfield.example')!;
    await page.getByLabel('E-mail').fill(second.email);
    await page.getByLabel('Password').fill(second.password);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.waitForURL((url) => !url.pathname.startsWith('/sign-in'));
  } else await signInThroughUi(page, suite.url, role);
  await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Asset lists', exact: true }).click();
  await page.waitForURL((url) => url.pathname === '/asset-lists');
  await page.getByRole('heading', { name: 'Asset lists', level: 1 }).waitFor();
}

async function openList(name: string) {
  await listsGrid().getByLabel('Search the table').fill(name);
  await listsGrid().getByRole('gridcell', { name, exact: true }).click();
  await page.getByRole('region', { name: `Assets of ${name}` }).waitFor();
}

describe('asset lists page', () => {
  it('an analyst saves a list from typed symbols (an unknown one named first), sees its assets in order, and deletes it', async () => {
    await openPage('analyst');
    const name = `Page list ${prefix}`;
    await page.getByRole('button', { name: 'New list' }).click();
    const form = page.getByRole('form', { name: 'New asset list' });
    await form.getByLabel('List name').fill(name);
    // Spaces, commas and new lines all separate; the fourth entry is not a stored asset.
    await form.getByLabel('Symbols').fill(`${symbols[2]} ${symbols[0]},\nNOSUCH${prefix}\n${symbols[1]}`);
    await form.getByRole('button', { name: 'Save list' }).click();
    await form.getByText(`row 3: unknown symbol NOSUCH${prefix}`).waitFor();
    expect(await form.getByLabel('Symbols').getAttribute('aria-invalid')).toBe('true');
    expect(await knex('asset_lists').where({ name })).toHaveLength(0);

    await form.getByLabel('Symbols').fill(`${symbols[2]} ${symbols[0]},\n${symbols[1]}`);
    await form.getByRole('button', { name: 'Save list' }).click();
    await page.getByRole('status').filter({ hasText: `Saved “${name}” with 3 assets.` }).waitFor();
    const saved = await knex('asset_lists').where({ name }).first();
    expect(saved).toBeTruthy();
    expect(page.url()).toContain(`list=${saved.id}`);

    // The new list is selected and its assets show in the order typed, with names and sectors.
    const assets = page.getByRole('region', { name: `Assets of ${name}` });
    await assets.getByRole('gridcell', { name: symbols[1], exact: true }).waitFor();
    expect(await column(assets, 'symbol')).toEqual([symbols[2], symbols[0], symbols[1]]);
    expect(await column(assets, 'name')).toEqual([`Invented holding 3 ${prefix}`, `Invented holding 1 ${prefix}`, `Invented holding 2 ${prefix}`]);
    expect(await column(assets, 'sector')).toEqual([`Sector Even ${prefix}`, `Sector Even ${prefix}`, `Sector Odd ${prefix}`]);
    const row = listsGrid().getByRole('row').filter({ hasText: name });
    await expect.poll(() => row.locator('[col-id="owner"]').textContent()).toBe(demoUser('analyst').name);
    expect(await row.locator('[col-id="size"]').textContent()).toBe('3');
    await page.getByRole('region', { name: 'Fits over this list' }).getByText('No fit has used this list yet.').waitFor();

    // Delete asks first; keeping it changes nothing.
    await page.getByRole('button', { name: 'Delete list' }).click();
    await page.getByRole('alert').filter({ hasText: `Delete “${name}”?` }).waitFor();
    await page.getByRole('button', { name: 'Keep it' }).click();
    expect(await knex('asset_lists').where({ id: saved.id })).toHaveLength(1);
    await page.getByRole('button', { name: 'Delete list' }).click();
    await page.getByRole('button', { name: 'Yes, delete the list' }).click();
    await page.getByRole('status').filter({ hasText: `Deleted “${name}”.` }).waitFor();
    await listsGrid().getByRole('gridcell', { name, exact: true }).waitFor({ state: 'detached' });
    expect(await knex('asset_lists').where({ id: saved.id })).toHaveLength(0);
    expect(page.url()).not.toContain('list=');
    const audit = await knex('audit_events').where({ object_type: 'asset-list', object_id: String(saved.id) }).orderBy('id').select('action');
    expect(audit.map((a) => a.action)).toEqual(['asset-list.created', 'asset-list.deleted']);
  }, 120_000);

  it('a PM reads a list, its assets and the fits over it, without create or delete controls', async () => {
    await openPage('pm');
    await openList(fixtureListName);
    const assets = page.getByRole('region', { name: `Assets of ${fixtureListName}` });
    await assets.getByRole('gridcell', { name: symbols[1], exact: true }).waitFor();
    expect(await column(assets, 'symbol')).toEqual([symbols[3], symbols[1]]);
    await page.getByRole('region', { name: 'Fits over this list' }).getByRole('link', { name: runLabel }).waitFor();
    expect(await page.getByRole('button', { name: 'New list' }).count()).toBe(0);
    expect(await page.getByRole('button', { name: 'Delete list' }).count()).toBe(0);
    expect(await page.getByRole('form', { name: 'New asset list' }).count()).toBe(0);
  }, 120_000);

  it('another analyst may create lists but sees no delete on a list someone else owns', async () => {
    await openPage('analyst2');
    await page.getByRole('button', { name: 'New list' }).waitFor();
    await openList(fixtureListName);
    await page.getByRole('region', { name: `Assets of ${fixtureListName}` }).getByRole('gridcell', { name: symbols[3], exact: true }).waitFor();
    expect(await page.getByRole('button', { name: 'Delete list' }).count()).toBe(0);
  }, 120_000);
});
