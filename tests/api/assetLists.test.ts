import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { testContext, unique } from '../helpers/app';
import { inProcessModelWorker, modelRunTokens } from '../helpers/modelWorker';
import { insertPanel } from '../helpers/returns';
import { useModelFitQueue } from '../../server/services/modelQueue';
import { plantedPanel } from '../../server/engine/planted';

/**
 * Saved asset lists and their use as a model run's universe, against the real app, the real test database, a real
 * pg-boss and the real job handler in this process (as tests/api/modelRuns.test.ts does). Returns are invented
 * planted-factor panels under unique symbols.
 */
useModelFitQueue(unique('model-fit-lists-'));
const ctx = testContext();
const worker = inProcessModelWorker(ctx.config.databaseUrl);
let tokens: Record<string, string> = {};

const as = (role: string) => ({ Authorization: `Bearer ${tokens[role]}` });

beforeAll(async () => {
  tokens = await modelRunTokens(ctx.app);
}, 60_000);

afterAll(async () => {
  await worker.stop();
  await ctx.close();
}, 30_000);

describe('saved asset lists', () => {
  it('the demo holds the analysts’ lists, made from the demo fund and sectors (npm test seeds the demo)', async () => {
    const lists = (await request(ctx.app).get('/api/asset-lists').set(as('pm'))).body.lists as { id: number; name: string; size: number }[];
    const core = lists.find((l) => l.name === 'Core Equity holdings');
    expect(core).toBeDefined();
    const detail = await request(ctx.app).get(`/api/asset-lists/${core!.id}`).set(as('pm'));
    const fund = await ctx.knex('portfolio_holdings as h').join('portfolios as p', 'p.id', 'h.portfolio_id').join('assets as a', 'a.id', 'h.asset_id').where('p.name', 'Quillfield Core Equity').orderBy('h.position').pluck('a.symbol');
    expect(detail.body.assets.map((a: { symbol: string }) => a.symbol)).toEqual(fund);
    const defensive = lists.find((l) => l.name === 'Defensive sectors');
    const sectors = new Set((await request(ctx.app).get(`/api/asset-lists/${defensive!.id}`).set(as('pm'))).body.assets.map((a: { sector: string }) => a.sector));
    expect([...sectors].sort()).toEqual(['Consumer staples', 'Health care', 'Utilities']);
  });

  it('creates a list, reads it back in the order entered, lists it, and audits it', async () => {
    const planted = plantedPanel({ assets: 4, observations: 40, factors: 1, seed: 31 });
    const symbols = await insertPanel(ctx.knex, unique('AL'), planted.panel.values, 40, 4);
    const name = unique('Core names ');
    const entered = [symbols[2], symbols[0], symbols[3]];
    const created = await request(ctx.app).post('/api/asset-lists').set(as('analyst')).send({ name, description: 'three of four', symbols: entered });
    expect(created.status).toBe(201);
    expect(created.body.name).toBe(name);
    expect(created.body.size).toBe(3);
    expect(created.body.canDelete).toBe(true);
    expect(created.body.assets.map((a: { symbol: string }) => a.symbol)).toEqual(entered);

    const list = await request(ctx.app).get('/api/asset-lists').set(as('pm'));
    expect(list.status).toBe(200);
    const mine = list.body.lists.find((l: { id: number }) => l.id === created.body.id);
    expect(mine).toMatchObject({ name, size: 3, canDelete: false, owner: { email: 'analyst@quillfield.example' } });

    const audit = await ctx.knex('audit_events').where({ action: 'asset-list.created', object_id: String(created.body.id) });
    expect(audit).toHaveLength(1);
    expect(audit[0].details).toEqual({ name, size: 3 });

    const sameName = await request(ctx.app).post('/api/asset-lists').set(as('analyst')).send({ name: name.toUpperCase(), symbols: entered });
    expect(sameName.status).toBe(409);
    expect(sameName.body.issues).toEqual([{ path: 'name', message: `you already have a list named "${name}"` }]);

    const pm = await request(ctx.app).post('/api/asset-lists').set(as('pm')).send({ name: unique('pm list '), symbols: entered });
    expect(pm.status).toBe(403);
  });

  it('refuses unknown and repeated symbols, naming row and symbol, and stores nothing', async () => {
    const planted = plantedPanel({ assets: 3, observations: 40, factors: 1, seed: 32 });
    const symbols = await insertPanel(ctx.knex, unique('AB'), planted.panel.values, 40, 3);
    const name = unique('Broken list ');
    const res = await request(ctx.app)
      .post('/api/asset-lists')
      .set(as('analyst'))
      .send({ name, symbols: [symbols[0], 'NOSUCH-LIST-SYMBOL', symbols[1], symbols[0]] });
    expect(res.status).toBe(422);
    expect(res.body.issues).toEqual([
      { path: 'symbols.1', message: 'row 2: unknown symbol NOSUCH-LIST-SYMBOL' },
      { path: 'symbols.3', message: `row 4: duplicate symbol ${symbols[0]} (also row 1)` },
    ]);
    expect(res.body.error).toMatch(/NOSUCH-LIST-SYMBOL/);
    expect(await ctx.knex('asset_lists').where({ name })).toHaveLength(0);
    // No member row of this request's assets exists (other files add lists meanwhile, so no table-wide count).
    expect(await ctx.knex('asset_list_members as m').join('assets as a', 'a.id', 'm.asset_id').whereIn('a.symbol', symbols)).toHaveLength(0);
    expect(await ctx.knex('audit_events').where({ action: 'asset-list.created' }).whereRaw(`details->>'name' = ?`, [name])).toHaveLength(0);

    const tooShort = await request(ctx.app).post('/api/asset-lists').set(as('analyst')).send({ name, symbols: [symbols[0]] });
    expect(tooShort.status).toBe(422);
    expect(tooShort.body.issues[0].path).toBe('symbols');
  });

  it('lets only the owner or an admin delete a list, and audits it', async () => {
    const planted = plantedPanel({ assets: 2, observations: 40, factors: 1, seed: 33 });
    const symbols = await insertPanel(ctx.knex, unique('AD'), planted.panel.values, 40, 2);
    const created = await request(ctx.app).post('/api/asset-lists').set(as('analyst')).send({ name: unique('Short-lived '), symbols });
    expect(created.status).toBe(201);
    const other = await request(ctx.app).delete(`/api/asset-lists/${created.body.id}`).set(as('analyst2'));
    expect(other.status).toBe(403);
    const own = await request(ctx.app).delete(`/api/asset-lists/${created.body.id}`).set(as('analyst'));
    expect(own.status).toBe(200);
    expect(await ctx.knex('asset_lists').where({ id: created.body.id })).toHaveLength(0);
    expect(await ctx.knex('asset_list_members').where({ list_id: created.body.id })).toHaveLength(0);
    expect(await ctx.knex('audit_events').where({ action: 'asset-list.deleted', object_id: String(created.body.id) })).toHaveLength(1);
    expect((await request(ctx.app).get(`/api/asset-lists/${created.body.id}`).set(as('pm'))).status).toBe(404);
  });
});

let runOfDeletedList = 0;
let deletedListId = 0;

describe('a run queued over a list that is then deleted (no worker yet)', () => {
  it('queues, and the list can still be deleted', async () => {
    const planted = plantedPanel({ assets: 4, observations: 60, factors: 1, seed: 35 });
    const symbols = await insertPanel(ctx.knex, unique('AX'), planted.panel.values, 60, 4);
    const list = await request(ctx.app).post('/api/asset-lists').set(as('analyst')).send({ name: unique('Doomed '), symbols });
    expect(list.status).toBe(201);
    const run = await request(ctx.app).post('/api/model-runs').set(as('analyst')).send({ universe: { kind: 'list', listId: list.body.id }, window: { kind: 'last', observations: 60 }, estimator: 'sample' });
    expect(run.status).toBe(201);
    runOfDeletedList = run.body.id;
    deletedListId = list.body.id;
    // The runs over this list, and only those (another run over all assets is not among them).
    const other = await request(ctx.app).post('/api/model-runs').set(as('analyst')).send({ universe: { kind: 'assets', symbols }, window: { kind: 'last', observations: 60 }, estimator: 'sample' });
    expect(other.status).toBe(201);
    const over = await request(ctx.app).get('/api/model-runs').query({ assetList: list.body.id }).set(as('pm'));
    expect(over.status).toBe(200);
    expect(over.body.runs.map((r: { id: number }) => r.id)).toEqual([run.body.id]);
    expect((await request(ctx.app).delete(`/api/asset-lists/${list.body.id}`).set(as('analyst'))).status).toBe(200);
  });
});

describe('a model run over a saved list', () => {
  beforeAll(async () => {
    await worker.start();
  }, 60_000);

  it('fails the run whose list was deleted before a worker took it, saying why', async () => {
    const until = Date.now() + 60_000;
    let run = (await request(ctx.app).get(`/api/model-runs/${runOfDeletedList}`).set(as('analyst'))).body;
    while (!['succeeded', 'failed', 'cancelled'].includes(run.status) && Date.now() < until) {
      await new Promise((r) => setTimeout(r, 100));
      run = (await request(ctx.app).get(`/api/model-runs/${runOfDeletedList}`).set(as('analyst'))).body;
    }
    expect(run.status).toBe('failed');
    expect(run.error).toBe(`No saved asset list ${deletedListId}`);
  }, 90_000);

  it('refuses an unknown list, naming universe.listId', async () => {
    const res = await request(ctx.app).post('/api/model-runs').set(as('analyst')).send({ universe: { kind: 'list', listId: 2_000_000_000 }, window: { kind: 'last', observations: 60 }, estimator: 'sample' });
    expect(res.status).toBe(422);
    expect(res.body.issues).toEqual([{ path: 'universe.listId', message: 'no saved asset list 2000000000' }]);
  });

  it('fits the list’s assets (and only those) through the queue and the worker', async () => {
    const t = 120;
    const n = 10;
    const planted = plantedPanel({ assets: n, observations: t, factors: 2, seed: 34 });
    const symbols = await insertPanel(ctx.knex, unique('AM'), planted.panel.values, t, n);
    const chosen = symbols.slice(0, 8).reverse(); // leave two out; order as entered does not matter to the fit
    const list = await request(ctx.app).post('/api/asset-lists').set(as('analyst')).send({ name: unique('Fit list '), symbols: chosen });
    expect(list.status).toBe(201);

    const tooMany = await request(ctx.app).post('/api/model-runs').set(as('analyst')).send({ universe: { kind: 'list', listId: list.body.id }, window: { kind: 'last', observations: t }, estimator: 'fa', factors: 8 });
    expect(tooMany.status).toBe(422);
    expect(tooMany.body.issues).toEqual([{ path: 'factors', message: 'must be below the number of assets (8)' }]);

    const created = await request(ctx.app).post('/api/model-runs').set(as('analyst')).send({ universe: { kind: 'list', listId: list.body.id }, window: { kind: 'last', observations: t }, estimator: 'fa', factors: 2 });
    expect(created.status).toBe(201);
    expect(created.body.parameters.universe).toEqual({ kind: 'list', listId: list.body.id });
    const until = Date.now() + 60_000;
    let run = created.body;
    while (!['succeeded', 'failed', 'cancelled'].includes(run.status) && Date.now() < until) {
      await new Promise((r) => setTimeout(r, 100));
      run = (await request(ctx.app).get(`/api/model-runs/${created.body.id}`).set(as('analyst'))).body;
    }
    expect(run.error).toBeNull();
    expect(run.status).toBe('succeeded');
    expect(run.summary).toMatchObject({ assets: 8, observations: t, factors: 2 });
    const loadings = await request(ctx.app).get(`/api/model-runs/${created.body.id}/loadings`).set(as('analyst'));
    expect(loadings.status).toBe(200);
    expect(JSON.stringify(loadings.body)).not.toContain(symbols[9]);
    const result = await ctx.knex('model_results').where({ run_id: created.body.id }).first();
    const ids = (await ctx.knex('assets').whereIn('symbol', chosen).orderBy('symbol').select('id')).map((r: { id: number }) => r.id);
    expect(result.asset_ids).toEqual(ids);
  }, 90_000);
});
