import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { spawn, type ChildProcess } from 'node:child_process';
import type PgBoss from 'pg-boss';
import { testContext, unique } from '../helpers/app';
import { inProcessModelWorker, modelRunTokens } from '../helpers/modelWorker';
import { businessDays, insertPanel } from '../helpers/returns';
import { bindModels } from '../../server/db/knex';
import { WORKER_NAME } from '../../server/worker/modelRunJob';
import { modelFitQueue, stopQueueSenders, useModelFitQueue } from '../../server/services/modelQueue';
import { loadModel, panelSha256 } from '../../server/services/modelStore';
import { plantedPanel } from '../../server/engine/planted';
import { createRandom } from '../../server/engine/random';
import { paths } from '../../server/config';

/**
 * Model runs end to end: the real app, the real test database, a real pg-boss and the real job handler registered
 * in this process (as the worker process does), and for the crash test a separate worker process that is killed.
 * The returns are invented planted-factor panels inserted under unique symbols.
 */
// This file's own queue: workers of other test files running at the same time never take its jobs.
useModelFitQueue(unique('model-fit-api-'));
const ctx = testContext();
const worker = inProcessModelWorker(ctx.config.databaseUrl);
let boss: PgBoss;
let tokens: Record<string, string> = {};

async function waitFor<T>(what: string, probe: () => Promise<T | undefined | null | false>, timeoutMs = 60_000, everyMs = 50): Promise<T> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const value = await probe();
    if (value) return value;
    if (Date.now() > until) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, everyMs));
  }
}

const getRun = (id: number) => request(ctx.app).get(`/api/model-runs/${id}`).set('Authorization', `Bearer ${tokens.analyst}`);

async function startInProcessWorker() {
  boss = await worker.start();
}

beforeAll(async () => {
  tokens = await modelRunTokens(ctx.app);
}, 60_000);

afterAll(async () => {
  await worker.stop();
  await ctx.close();
}, 30_000);

describe('model runs before any worker runs', () => {
  it('refuses requests that cannot be fitted, naming the field', async () => {
    const planted = plantedPanel({ assets: 5, observations: 60, factors: 1, seed: 11 });
    const symbols = await insertPanel(ctx.knex, unique('MV'), planted.panel.values, 60, 5);
    const post = (body: object) => request(ctx.app).post('/api/model-runs').set('Authorization', `Bearer ${tokens.analyst}`).send(body);

    const tooManyFactors = await post({ universe: { kind: 'assets', symbols }, window: { kind: 'last', observations: 60 }, estimator: 'fa', factors: 5 });
    expect(tooManyFactors.status).toBe(422);
    expect(tooManyFactors.body.issues).toEqual([{ path: 'factors', message: 'must be below the number of assets (5)' }]);

    const shortWindow = await post({ universe: { kind: 'assets', symbols }, window: { kind: 'dates', from: '2019-01-01', to: '2019-01-31' }, estimator: 'fa', factors: 1 });
    expect(shortWindow.status).toBe(422);
    expect(shortWindow.body.error).toMatch(/at least 30 observations per asset/);

    const unknown = await post({ universe: { kind: 'assets', symbols: [symbols[0], 'NOSUCH-SYMBOL'] }, window: { kind: 'last', observations: 60 }, estimator: 'sample' });
    expect(unknown.status).toBe(422);
    expect(unknown.body.issues).toEqual([{ path: 'universe.symbols', message: 'unknown symbol NOSUCH-SYMBOL' }]);

    const noFactors = await post({ universe: { kind: 'assets', symbols }, window: { kind: 'last', observations: 60 }, estimator: 'ppca' });
    expect(noFactors.status).toBe(422);
    expect(noFactors.body.issues[0].path).toBe('factors');

    const pm = await request(ctx.app).post('/api/model-runs').set('Authorization', `Bearer ${tokens.pm}`).send({ universe: { kind: 'all' }, window: { kind: 'last', observations: 60 }, estimator: 'sample' });
    expect(pm.status).toBe(403);
  });

  it('cancels a queued run, which no worker then runs', async () => {
    const planted = plantedPanel({ assets: 6, observations: 80, factors: 1, seed: 12 });
    const symbols = await insertPanel(ctx.knex, unique('MQ'), planted.panel.values, 80, 6);
    const created = await request(ctx.app)
      .post('/api/model-runs')
      .set('Authorization', `Bearer ${tokens.analyst}`)
      .send({ universe: { kind: 'assets', symbols }, window: { kind: 'last', observations: 80 }, estimator: 'fa', factors: 1 });
    expect(created.status).toBe(201);
    expect(created.body.status).toBe('queued');
    const cancelled = await request(ctx.app).post(`/api/model-runs/${created.body.id}/cancel`).set('Authorization', `Bearer ${tokens.analyst}`);
    expect(cancelled.status).toBe(200);
    expect(cancelled.body.status).toBe('cancelled');
    expect(cancelled.body.error).toBe('Cancelled by Noor Castellanos');
    const { job_id: jobId } = await ctx.knex('model_runs').where({ id: created.body.id }).first();
    const job = await ctx.knex('pgboss.job').where({ id: jobId }).first();
    expect(job.state).toBe('cancelled');
    const again = await request(ctx.app).post(`/api/model-runs/${created.body.id}/cancel`).set('Authorization', `Bearer ${tokens.analyst}`);
    expect(again.status).toBe(409);
  });
});

let queuedBeforeRestart = 0;

describe('a job queued before the web server restarts', () => {
  it('stays queued in PostgreSQL while no worker runs and the web server is replaced', async () => {
    const planted = plantedPanel({ assets: 8, observations: 90, factors: 1, seed: 13 });
    const symbols = await insertPanel(ctx.knex, unique('MR'), planted.panel.values, 90, 8);
    const created = await request(ctx.app)
      .post('/api/model-runs')
      .set('Authorization', `Bearer ${tokens.analyst}`)
      .send({ universe: { kind: 'assets', symbols }, window: { kind: 'last', observations: 90 }, estimator: 'ppca', factors: 1 });
    expect(created.status).toBe(201);
    queuedBeforeRestart = created.body.id;
    // The web server goes away (its queue connection closes); a new one starts over the same database.
    await stopQueueSenders();
    const restarted = testContext();
    const res = await request(restarted.app).get(`/api/model-runs/${queuedBeforeRestart}`).set('Authorization', `Bearer ${tokens.analyst}`);
    expect(res.body.status).toBe('queued');
    const { job_id: jobId } = await ctx.knex('model_runs').where({ id: queuedBeforeRestart }).first();
    expect((await ctx.knex('pgboss.job').where({ id: jobId }).first()).state).toBe('created');
    bindModels(ctx.knex);
    await restarted.close();
  });
});

describe('model runs with a worker', () => {
  beforeAll(startInProcessWorker, 60_000);

  it('runs the job queued before the restart once a worker is up', async () => {
    const finished = await waitFor('the queued run to finish', async () => {
      const res = await getRun(queuedBeforeRestart);
      return ['succeeded', 'failed', 'cancelled'].includes(res.body.status) ? res.body : null;
    });
    expect(finished.status).toBe('succeeded');
  }, 60_000);

  it('goes queued → running → succeeded and stores the model with its fingerprint', async () => {
    const t = 250;
    const n = 40;
    const planted = plantedPanel({ assets: n, observations: t, factors: 3, seed: 21, noise: 'student-t' });
    const symbols = await insertPanel(ctx.knex, unique('MS'), planted.panel.values, t, n);
    const created = await request(ctx.app)
      .post('/api/model-runs')
      .set('Authorization', `Bearer ${tokens.analyst}`)
      .send({ label: 'end to end', universe: { kind: 'assets', symbols }, window: { kind: 'last', observations: t }, estimator: 'fa', factors: 3, weighting: { kind: 'equal' }, mean: 'sample', missing: 'em' });
    expect(created.status).toBe(201);
    expect(created.body.status).toBe('queued');
    expect(created.body.label).toMatch(/^FA-\d{4} end to end$/);
    const seen: string[] = ['queued'];
    const finished = await waitFor('the run to finish', async () => {
      const res = await getRun(created.body.id);
      if (seen[seen.length - 1] !== res.body.status) seen.push(res.body.status);
      return ['succeeded', 'failed', 'cancelled'].includes(res.body.status) ? res.body : null;
    }, 60_000, 20);
    expect(finished.error).toBeNull();
    expect(finished.status).toBe('succeeded');
    // Every status seen is in order; 'running' is proven by the worker's own stamps even when it passed between polls.
    expect(['queued', 'running', 'succeeded'].filter((s) => seen.includes(s))).toEqual(seen);
    const row = await ctx.knex('model_runs').where({ id: created.body.id }).first();
    expect(row.attempts).toBe(1);
    expect(row.started_at.getTime()).toBeLessThanOrEqual(row.finished_at.getTime());
    expect(row.progress_fraction).toBe(1);
    expect(finished.summary).toEqual({ assets: n, observations: t, factors: 3, firstDate: businessDays(t)[0], lastDate: businessDays(t)[t - 1] });

    const results = await request(ctx.app).get(`/api/model-runs/${created.body.id}/results`).set('Authorization', `Bearer ${tokens.pm}`);
    expect(results.status).toBe(200);
    // The fingerprint is the SHA-256 of exactly the values inserted (same order: dates × symbols).
    expect(results.body.dataSha256).toBe(panelSha256(planted.panel.values));
    expect(results.body.diagnostics.converged).toBe(true);
    expect(results.body.diagnostics.iterations).toBeGreaterThan(0);
    expect(results.body.diagnostics.logLikelihoodTrace.length).toBeGreaterThan(0);
    expect(results.body.diagnostics.heywood).toHaveLength(n);
    expect(results.body.diagnostics.eigenvalues.length).toBeGreaterThanOrEqual(4);
    expect(results.body.assetRows.map((r: { symbol: string }) => r.symbol)).toEqual(symbols);
    for (const r of results.body.assetRows) {
      expect(r.communality + r.specificVariance).toBeCloseTo(r.variance, 15);
      expect(r.factorShare).toBeGreaterThan(0);
      expect(r.factorShare).toBeLessThan(1);
    }
    // The stored model reads back exactly what the API reports, through the service other features use.
    const stored = await loadModel(created.body.id);
    expect(stored.model.kind).toBe('factor');
    expect(stored.symbols).toEqual(symbols);
    if (stored.model.kind === 'factor') {
      expect(stored.model.loadings).toHaveLength(n * 3);
      expect(results.body.assetRows[7].specificVariance).toBe(stored.model.specificVariance[7]);
      // Planted 3 factors: the fitted loading subspace is close to the true one (invented data; a sanity check only).
      expect(stored.factorScores).toHaveLength(t * 3);
    }
    expect(results.body.logLikelihood).toBe(stored.diagnostics.logLikelihoodTrace!.at(-1));

    const loadings = await request(ctx.app).get(`/api/model-runs/${created.body.id}/loadings?orientation=varimax`).set('Authorization', `Bearer ${tokens.pm}`);
    expect(loadings.status).toBe(200);
    expect(loadings.body.loadings).toHaveLength(n);
    expect(loadings.body.note).toMatch(/orientation/);
    // Rotation leaves communalities unchanged (Lawley & Maxwell 1971): varimax rows have the same sums of squares.
    loadings.body.loadings.forEach((row: number[], i: number) => expect(row.reduce((s, v) => s + v * v, 0)).toBeCloseTo(results.body.assetRows[i].communality, 12));

    // A second version over a shorter window, compared with the first.
    const second = await request(ctx.app)
      .post('/api/model-runs')
      .set('Authorization', `Bearer ${tokens.analyst2}`)
      .send({ universe: { kind: 'assets', symbols }, window: { kind: 'last', observations: 200 }, estimator: 'ppca', factors: 'recommend' });
    expect(second.status).toBe(201);
    const done = await waitFor('the second run', async () => {
      const res = await getRun(second.body.id);
      return ['succeeded', 'failed', 'cancelled'].includes(res.body.status) ? res.body : null;
    }, 150_000);
    expect(done.status).toBe('succeeded');
    const secondResults = await request(ctx.app).get(`/api/model-runs/${second.body.id}/results`).set('Authorization', `Bearer ${tokens.analyst}`);
    expect(secondResults.body.diagnostics.recommendationReason).toMatch(/L = \d+/);
    expect(secondResults.body.factors).toBe(secondResults.body.diagnostics.recommendedFactors);
    expect(secondResults.body.diagnostics.criteria.length).toBeGreaterThan(1);
    const compare = await request(ctx.app).get(`/api/model-runs/${created.body.id}/compare?with=${second.body.id}`).set('Authorization', `Bearer ${tokens.analyst}`);
    expect(compare.status).toBe(200);
    expect(compare.body.commonAssets).toBe(n);
    expect(compare.body.principalAnglesDegrees.length).toBe(Math.min(3, secondResults.body.factors));
    for (const angle of compare.body.principalAnglesDegrees) expect(angle).toBeGreaterThanOrEqual(0);
    expect(compare.body.assets[0].communalityChange).toBeCloseTo(compare.body.assets[0].communalitySecond - compare.body.assets[0].communalityFirst, 15);
    // The demo portfolios hold none of this test's assets: no volatility, nothing covered.
    for (const p of compare.body.portfolios) if (p.coveredFirst === 0) expect(p.volFirst).toBeNull();
  }, 240_000);

  it('compares the demo versions on every portfolio the caller may read', async () => {
    const demo = await ctx.knex('model_runs').where('label', 'like', '%demo').whereIn('estimator', ['fa', 'ppca']).orderBy('id');
    expect(demo.length).toBeGreaterThanOrEqual(2);
    const pm = await ctx.knex('users').where({ email: 'pm@quillfield.example' }).first();
    const own = await ctx.knex('portfolios').where({ owner_id: pm.id });
    const res = await request(ctx.app).get(`/api/model-runs/${demo[0].id}/compare?with=${demo[1].id}`).set('Authorization', `Bearer ${tokens.pm}`);
    expect(res.status).toBe(200);
    // A portfolio manager sees their own portfolios only.
    expect(res.body.portfolios.map((p: { id: number }) => p.id).sort()).toEqual(own.map((p: { id: number }) => p.id).sort());
    const covered = res.body.portfolios.filter((p: { coveredFirst: number }) => p.coveredFirst > 0.999);
    expect(covered.length).toBeGreaterThan(0);
    for (const p of covered) {
      expect(p.volFirst).toBeGreaterThan(0);
      expect(p.volChange).toBeCloseTo(p.volSecond - p.volFirst, 15);
    }
    const asAnalyst = await request(ctx.app).get(`/api/model-runs/${demo[0].id}/compare?with=${demo[1].id}`).set('Authorization', `Bearer ${tokens.analyst}`);
    const others = await ctx.knex('portfolios').whereNot({ owner_id: pm.id }).select('id');
    const analystIds = asAnalyst.body.portfolios.map((p: { id: number }) => p.id);
    expect(analystIds).toEqual(expect.arrayContaining([...own, ...others].map((p: { id: number }) => p.id)));
  });

  it('records a failing run with its reason', async () => {
    // Two assets whose histories do not overlap: each has 40 observations, but no date has both.
    const dates = businessDays(80);
    const values = new Float64Array(80 * 2).fill(NaN);
    for (let r = 0; r < 40; r++) values[r * 2] = 0.001 * Math.sin(r);
    for (let r = 40; r < 80; r++) values[r * 2 + 1] = 0.001 * Math.cos(r);
    const symbols = await insertPanel(ctx.knex, unique('MF'), values, 80, 2, dates);
    const created = await request(ctx.app)
      .post('/api/model-runs')
      .set('Authorization', `Bearer ${tokens.analyst}`)
      .send({ universe: { kind: 'assets', symbols }, window: { kind: 'last', observations: 80 }, estimator: 'sample', missing: 'complete-rows' });
    expect(created.status).toBe(201);
    const finished = await waitFor('the run to fail', async () => {
      const res = await getRun(created.body.id);
      return ['succeeded', 'failed', 'cancelled'].includes(res.body.status) ? res.body : null;
    });
    expect(finished.status).toBe('failed');
    expect(finished.error).toBe('Too few observations: 0 dates remain after the missing-data policy "complete-rows"; at least 30 are needed');
    const results = await request(ctx.app).get(`/api/model-runs/${created.body.id}/results`).set('Authorization', `Bearer ${tokens.analyst}`);
    expect(results.status).toBe(409);
    expect(await ctx.knex('model_results').where({ run_id: created.body.id })).toHaveLength(0);
  }, 60_000);

  it('cancels a running fit', async () => {
    const t = 500;
    const n = 400;
    const planted = plantedPanel({ assets: n, observations: t, factors: 8, seed: 31, noise: 'student-t' });
    // 5 % of the values hidden: EM with missing data takes seconds here even on a quiet machine, so the cancel
    // reliably lands mid-fit (the complete-data fit of this size can finish before a poll sees it running).
    const hide = createRandom(32);
    const values = planted.panel.values.map((v) => (hide.uniform() < 0.05 ? NaN : v));
    const symbols = await insertPanel(ctx.knex, unique('MC'), values, t, n);
    const created = await request(ctx.app)
      .post('/api/model-runs')
      .set('Authorization', `Bearer ${tokens.analyst}`)
      .send({ universe: { kind: 'assets', symbols }, window: { kind: 'last', observations: t }, estimator: 'fa', factors: 12 });
    expect(created.status).toBe(201);
    // Cancel in the middle of the EM iterations (the fit thread is stopped, not merely left to finish).
    await waitFor('the EM iterations to start', async () => (await getRun(created.body.id)).body.progress.stage === 'factor analysis with missing data (EM)', 60_000, 10);
    const cancel = await request(ctx.app).post(`/api/model-runs/${created.body.id}/cancel`).set('Authorization', `Bearer ${tokens.analyst2}`);
    expect(cancel.status).toBe(200);
    const finished = await waitFor('the run to stop', async () => {
      const res = await getRun(created.body.id);
      return ['succeeded', 'failed', 'cancelled'].includes(res.body.status) ? res.body : null;
    });
    expect(finished.status).toBe('cancelled');
    expect(finished.error).toBe('Cancelled by Tomas Okafor');
    expect(await ctx.knex('model_results').where({ run_id: created.body.id })).toHaveLength(0);
  }, 120_000);

  it('needs a second person to approve, with a comment, and audits approval and retirement', async () => {
    const planted = plantedPanel({ assets: 10, observations: 100, factors: 2, seed: 41 });
    const symbols = await insertPanel(ctx.knex, unique('MA'), planted.panel.values, 100, 10);
    const created = await request(ctx.app)
      .post('/api/model-runs')
      .set('Authorization', `Bearer ${tokens.analyst}`)
      .send({ universe: { kind: 'assets', symbols }, window: { kind: 'last', observations: 100 }, estimator: 'fa', factors: 2 });
    const runId = created.body.id as number;
    const early = await request(ctx.app).post(`/api/model-runs/${runId}/approve`).set('Authorization', `Bearer ${tokens.analyst2}`).send({ comment: 'too early' });
    expect([409, 200]).toContain(early.status); // 409 while not yet succeeded
    await waitFor('the run to succeed', async () => (await getRun(runId)).body.status === 'succeeded');

    const own = await request(ctx.app).post(`/api/model-runs/${runId}/approve`).set('Authorization', `Bearer ${tokens.analyst}`).send({ comment: 'looks right to me' });
    expect(own.status).toBe(403);
    expect(own.body.error).toMatch(/a second analyst or an administrator must approve it/);
    const noComment = await request(ctx.app).post(`/api/model-runs/${runId}/approve`).set('Authorization', `Bearer ${tokens.analyst2}`).send({});
    expect(noComment.status).toBe(422);
    const pm = await request(ctx.app).post(`/api/model-runs/${runId}/approve`).set('Authorization', `Bearer ${tokens.pm}`).send({ comment: 'pm tries' });
    expect(pm.status).toBe(403);

    const approved = await request(ctx.app).post(`/api/model-runs/${runId}/approve`).set('Authorization', `Bearer ${tokens.analyst2}`).send({ comment: 'Checked spectrum and Heywood flags' });
    expect(approved.status).toBe(200);
    expect(approved.body.lifecycle).toBe('approved');
    expect(approved.body.approvedBy.name).toBe('Tomas Okafor');
    expect(approved.body.approvalComment).toBe('Checked spectrum and Heywood flags');
    const audit = await ctx.knex('audit_events').where({ object_type: 'model_run', object_id: String(runId) }).orderBy('id');
    expect(audit.map((e) => e.action)).toEqual(['model-run.created', 'model-run.approved']);
    expect(audit[1].details.comment).toBe('Checked spectrum and Heywood flags');
    expect(audit[1].actor_email).toBe('analyst2@quillfield.example');

    const list = await request(ctx.app).get('/api/model-runs/approved').set('Authorization', `Bearer ${tokens.pm}`);
    expect(list.body.models.some((m: { runId: number }) => m.runId === runId)).toBe(true);

    const retired = await request(ctx.app).post(`/api/model-runs/${runId}/retire`).set('Authorization', `Bearer ${tokens.admin}`).send({ comment: 'superseded by a longer window' });
    expect(retired.status).toBe(200);
    expect(retired.body.lifecycle).toBe('retired');
    const list2 = await request(ctx.app).get('/api/model-runs/approved').set('Authorization', `Bearer ${tokens.pm}`);
    expect(list2.body.models.some((m: { runId: number }) => m.runId === runId)).toBe(false);
    const audit2 = await ctx.knex('audit_events').where({ object_type: 'model_run', object_id: String(runId) }).orderBy('id');
    expect(audit2.map((e) => e.action)).toEqual(['model-run.created', 'model-run.approved', 'model-run.retired']);
  }, 60_000);

  it('shares the load: a second worker process takes a job while the first worker is busy', async () => {
    const big = plantedPanel({ assets: 400, observations: 500, factors: 8, seed: 61, noise: 'student-t' });
    const bigSymbols = await insertPanel(ctx.knex, unique('MW'), big.panel.values, 500, 400);
    const small = plantedPanel({ assets: 12, observations: 120, factors: 2, seed: 62 });
    const smallSymbols = await insertPanel(ctx.knex, unique('MX'), small.panel.values, 120, 12);
    const post = (symbols: string[], t: number, factors: number | 'recommend') =>
      request(ctx.app).post('/api/model-runs').set('Authorization', `Bearer ${tokens.analyst}`).send({ universe: { kind: 'assets', symbols }, window: { kind: 'last', observations: t }, estimator: 'fa', factors });
    // A long job: choosing L by held-out blocks refits L = 1 … 10 six times (it is cancelled at the end).
    const first = await post(bigSymbols, 500, 'recommend');
    // This process's worker takes the long fit…
    const running = await waitFor('the long fit to start here', async () => {
      const res = await getRun(first.body.id);
      return res.body.status === 'running' ? res.body : null;
    }, 60_000, 10);
    expect(running.worker).toBe(WORKER_NAME);
    // …then a second worker process starts, and the next job goes to it while this one is busy.
    const child = spawn(process.execPath, ['--import', 'tsx', 'server/worker/main.ts'], { cwd: paths.repoRoot, env: { ...process.env, DATABASE_URL: ctx.config.databaseUrl, LOADLINE_MODEL_FIT_QUEUE: modelFitQueue() }, stdio: ['ignore', 'pipe', 'ignore'] });
    try {
      await new Promise<void>((resolve, reject) => {
        child.stdout!.on('data', (chunk: Buffer) => chunk.toString().includes('waiting for jobs') && resolve());
        child.once('exit', (code) => reject(new Error(`worker exited (${code})`)));
      });
      const second = await post(smallSymbols, 120, 2);
      const done = await waitFor('the second run', async () => {
        const res = await getRun(second.body.id);
        return ['succeeded', 'failed', 'cancelled'].includes(res.body.status) ? res.body : null;
      }, 90_000);
      expect(done.status).toBe('succeeded');
      expect((await getRun(first.body.id)).body.status).toBe('running');
      expect(done.worker).not.toBe(WORKER_NAME);
      expect(done.worker).toMatch(/:\d+$/);
      await request(ctx.app).post(`/api/model-runs/${first.body.id}/cancel`).set('Authorization', `Bearer ${tokens.analyst}`).expect(200);
      const stopped = await waitFor('the long fit to stop', async () => {
        const res = await getRun(first.body.id);
        return ['succeeded', 'failed', 'cancelled'].includes(res.body.status) ? res.body : null;
      }, 60_000);
      expect(stopped.status).toBe('cancelled');
    } finally {
      child.kill('SIGTERM');
      await new Promise((r) => (child.exitCode !== null ? r(null) : child.once('exit', r)));
    }
  }, 240_000);

  it('is never left running when its worker process is killed mid-fit', async () => {
    // Stop this process's worker so that the separate worker process takes the job.
    await boss.offWork(modelFitQueue());
    const t = 400;
    const n = 300;
    const planted = plantedPanel({ assets: n, observations: t, factors: 6, seed: 51, noise: 'student-t' });
    const symbols = await insertPanel(ctx.knex, unique('MK'), planted.panel.values, t, n);
    let child: ChildProcess | null = null;
    try {
      child = spawn(process.execPath, ['--import', 'tsx', 'server/worker/main.ts'], { cwd: paths.repoRoot, env: { ...process.env, DATABASE_URL: ctx.config.databaseUrl, LOADLINE_MODEL_FIT_QUEUE: modelFitQueue() }, stdio: 'ignore' });
      const created = await request(ctx.app)
        .post('/api/model-runs')
        .set('Authorization', `Bearer ${tokens.analyst}`)
        .send({ universe: { kind: 'assets', symbols }, window: { kind: 'last', observations: t }, estimator: 'fa', factors: 10 });
      expect(created.status).toBe(201);
      await waitFor('the worker process to start the fit', async () => (await getRun(created.body.id)).body.status === 'running', 60_000, 10);
      child.kill('SIGKILL');
      await new Promise((r) => child!.once('exit', r));
      child = null;
      const killedRow = await ctx.knex('model_runs').where({ id: created.body.id }).first();
      expect(killedRow.status).toBe('running');
      expect(killedRow.attempts).toBe(1);

      // This process's worker (sweep: heartbeat older than 3 s) notices, pg-boss retries, and the run completes.
      await boss.work(modelFitQueue(), { batchSize: 1, pollingIntervalSeconds: 0.5 }, async (jobs) => {
        const { runModelFitJob } = await import('../../server/worker/modelRunJob');
        for (const job of jobs) await runModelFitJob(job as never, { heartbeatMs: 250 });
      });
      const finished = await waitFor('the run to finish after the crash', async () => {
        const res = await getRun(created.body.id);
        return ['succeeded', 'failed', 'cancelled'].includes(res.body.status) ? res.body : null;
      }, 90_000, 100);
      expect(finished.status).toBe('succeeded');
      expect(finished.attempts).toBe(2);
    } finally {
      child?.kill('SIGKILL');
    }
  }, 180_000);
});
