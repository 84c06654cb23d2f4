// Portfolio risk API: a 500-holding portfolio (with a 1000-asset benchmark) on a 1000-asset, 750-date factor model
// (FA, L = 10), GET /api/portfolios/:id/risk (its default answer: the 25 largest contributors, no history) under 20
// concurrent clients for 10 s (target: p95 ≤ 50 ms); then, reported without a target, the risk page's own request
// (every contributor and the factor history) and the what-if POST with different weights in every request.
// The server runs in its own process (bench/support/riskServer.ts); autocannon drives it from this one.
// Invented planted panel (demo data, not market data). Latencies are measured per response and printed.
import { spawn, type ChildProcess } from 'node:child_process';
import { join } from 'node:path';
import { cpus, loadavg } from 'node:os';
import { performance } from 'node:perf_hooks';
import autocannon from 'autocannon';
import type { Knex } from 'knex';
import { from as copyFrom } from 'pg-copy-streams';
import { pipeline } from 'node:stream/promises';
import { Readable } from 'node:stream';
import { createKnex, bindModels } from '../server/db/knex';
import { loadConfig } from '../server/config';
import { plantedPanel } from '../server/engine/planted';
import { createRandom } from '../server/engine/random';
import { prepareDatabase } from '../scripts/prepare';
import { loadPanel } from '../server/services/modelPanel';
import { computeModelRun } from '../server/worker/fitCompute';
import { insertRun } from '../server/services/modelRunService';
import { insertModelResult, resultOfFit } from '../server/services/modelStore';
import { ModelRunParametersSchema } from '../shared/schemas/modelRuns';
import { DEMO_USERS } from '../server/demo/users';
import { upsertUser } from '../server/services/authService';

const N = 1000;
const T = 750;
const HOLDINGS = 500;
const PREFIX = 'LRB'; // invented "load risk bench" symbols LRB0000 … LRB0999
const CONNECTIONS = 20;
const DURATION_S = 10;

function percentile(sorted: number[], p: number): number {
  if (!sorted.length) return NaN;
  return sorted[Math.min(sorted.length - 1, Math.ceil((p / 100) * sorted.length) - 1)];
}

function businessDates(count: number): string[] {
  const out: string[] = [];
  const d = new Date(Date.UTC(2022, 0, 3));
  while (out.length < count) {
    const day = d.getUTCDay();
    if (day !== 0 && day !== 6) out.push(d.toISOString().slice(0, 10));
    d.setUTCDate(d.getUTCDate() + 1);
  }
  return out;
}

/** 1000 invented assets with 750 dates of returns, stored once (COPY); answers the symbols. */
async function ensureUniverse(knex: Knex): Promise<{ symbols: string[]; dates: string[] }> {
  const symbols = Array.from({ length: N }, (_, i) => `${PREFIX}${String(i).padStart(4, '0')}`);
  const dates = businessDates(T);
  const have = await knex('assets').whereIn('symbol', symbols).count<{ count: number }[]>({ count: '*' }).first();
  if (Number(have?.count) === N) return { symbols, dates };
  const planted = plantedPanel({ assets: N, observations: T, factors: 8, seed: 4242, noise: 'student-t' });
  await knex('assets').insert(symbols.map((symbol) => ({ symbol, name: `Bench asset ${symbol}`, sector: `Bench sector ${symbol.charCodeAt(6) % 8}` }))).onConflict('symbol').ignore();
  const ids = new Map(((await knex('assets').whereIn('symbol', symbols).select('id', 'symbol')) as { id: number; symbol: string }[]).map((r) => [r.symbol, r.id]));
  const client = (await knex.client.acquireConnection()) as import('pg').PoolClient;
  try {
    const lines = function* () {
      for (let t = 0; t < T; t++) {
        let chunk = '';
        for (let i = 0; i < N; i++) chunk += `${ids.get(symbols[i])}\t${dates[t]}\t${planted.panel.values[t * N + i]}\n`;
        yield chunk;
      }
    };
    await pipeline(Readable.from(lines()), client.query(copyFrom('COPY return_observations (asset_id, date, value) FROM STDIN')) as unknown as NodeJS.WritableStream);
  } finally {
    await knex.client.releaseConnection(client);
  }
  return { symbols, dates };
}

async function storeRun(knex: Knex, symbols: string[], dates: string[], estimator: 'fa' | 'ppca'): Promise<number> {
  // Fitted once per bench database: later runs reuse it (the fit's own speed is the model-run benchmark's business).
  const existing = await knex('model_runs as r')
    .join('model_results as m', 'm.run_id', 'r.id')
    .where({ 'r.estimator': estimator, 'r.status': 'succeeded', 'm.assets': N, 'm.observations': T })
    .whereRaw(`r.parameters->>'label' = 'portfolio-risk bench'`)
    .orderBy('r.id', 'desc')
    .first('r.id');
  if (existing) return existing.id as number;
  const parameters = ModelRunParametersSchema.parse({
    label: 'portfolio-risk bench',
    universe: { kind: 'assets', symbols },
    window: { kind: 'dates', from: dates[0], to: dates[dates.length - 1] },
    estimator,
    factors: 10,
  });
  const panel = await loadPanel(knex, parameters.universe, parameters.window, parameters.missing);
  const started = performance.now();
  const fit = computeModelRun(panel, parameters);
  console.log(`  fitted ${estimator.toUpperCase()} N=${panel.assets} T=${panel.observations} L=10 in ${((performance.now() - started) / 1000).toFixed(2)} s`);
  const analyst = await knex('users').where({ email: 'analyst@quillfield.example' }).first();
  const approver = await knex('users').where({ email: 'analyst2@quillfield.example' }).first();
  return knex.transaction(async (trx) => {
    const run = await insertRun(trx, parameters, analyst, null);
    await trx('model_runs').where({ id: run.id }).update({ status: 'succeeded', finished_at: trx.fn.now(), progress_fraction: 1 });
    await insertModelResult(trx, run.id, resultOfFit(panel, fit));
    await trx('model_runs').where({ id: run.id }).update({ lifecycle: 'approved', approved_by: approver.id, approved_at: trx.fn.now(), approval_comment: 'benchmark model' });
    return run.id;
  });
}

async function ensurePortfolio(knex: Knex, symbols: string[]): Promise<number> {
  const pm = await knex('users').where({ email: 'pm@quillfield.example' }).first();
  const ids = ((await knex('assets').whereIn('symbol', symbols).orderBy('symbol').select('id')) as { id: number }[]).map((r) => r.id);
  const rng = createRandom(99);
  await knex('portfolios').where({ owner_id: pm.id }).whereIn('name', ['Bench 500-holding fund', 'Bench 1000-asset benchmark']).delete();
  const [bench] = await knex('portfolios').insert({ name: 'Bench 1000-asset benchmark', owner_id: pm.id, kind: 'benchmark' }).returning('id');
  const bw = ids.map(() => 0.2 + rng.uniform());
  const bs = bw.reduce((s, x) => s + x, 0);
  await knex('portfolio_holdings').insert(ids.map((asset_id, position) => ({ portfolio_id: bench.id, asset_id, position, weight: bw[position] / bs })));
  const [fund] = await knex('portfolios').insert({ name: 'Bench 500-holding fund', owner_id: pm.id, benchmark_portfolio_id: bench.id }).returning('id');
  const chosen = ids.filter((_, i) => i % 2 === 0).slice(0, HOLDINGS);
  const fw = chosen.map(() => 0.2 + rng.uniform());
  const fs = fw.reduce((s, x) => s + x, 0);
  await knex('portfolio_holdings').insert(chosen.map((asset_id, position) => ({ portfolio_id: fund.id, asset_id, position, weight: fw[position] / fs })));
  return fund.id;
}

/** The server's CPU time so far in ms (it answers SIGUSR2 on stdout). */
function serverCpuMs(child: ChildProcess): Promise<number> {
  return new Promise((resolve) => {
    const listen = (data: Buffer) => {
      const match = /CPU (\d+)/.exec(data.toString());
      if (match) {
        child.stdout!.off('data', listen);
        resolve(Number(match[1]) / 1000);
      }
    };
    child.stdout!.on('data', listen);
    child.kill('SIGUSR2');
  });
}

function startServer(): Promise<{ child: ChildProcess; port: number }> {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, [...(process.env.BENCH_SERVER_NODE_ARGS?.split(' ').filter(Boolean) ?? []), '--import', 'tsx', join(import.meta.dirname, 'support', 'riskServer.ts')], { stdio: ['ignore', 'pipe', 'inherit'], env: process.env });
    let buffer = '';
    child.stdout!.on('data', (data: Buffer) => {
      buffer += data.toString();
      const match = /PORT (\d+)/.exec(buffer);
      if (match) resolve({ child, port: Number(match[1]) });
    });
    child.on('exit', (code) => reject(new Error(`risk server exited with ${code}`)));
  });
}

async function load(url: string, token: string, method: 'GET' | 'POST', makeBody?: (n: number) => string) {
  const times: number[] = [];
  let errors = 0;
  let sent = 0;
  const instance = autocannon({
    url,
    connections: CONNECTIONS,
    duration: DURATION_S,
    headers: { authorization: `Bearer ${token}`, ...(makeBody ? { 'content-type': 'application/json' } : {}) },
    requests: [
      {
        method,
        // A fresh body per request (what-if): nothing can be reused between two of them.
        setupRequest: (req: Record<string, unknown>) => (makeBody ? { ...req, body: makeBody(sent++) } : req),
      },
    ],
  } as unknown as autocannon.Options) as unknown as autocannon.Instance & PromiseLike<autocannon.Result>;
  instance.on('response', (_client: unknown, statusCode: number, _bytes: number, responseTime: number) => {
    if (statusCode !== 200) errors++;
    times.push(responseTime);
  });
  const result = await instance;
  times.sort((a, b) => a - b);
  return { result, times, errors };
}

export default async function run(): Promise<void> {
  await prepareDatabase();
  const config = loadConfig();
  const knex = createKnex(config.databaseUrl, { max: 4 });
  bindModels(knex);
  // The demo sign-ins the bench uses (the bench database may predate them).
  for (const user of DEMO_USERS.filter((u) => ['pm@quillfield.example', 'analyst@quillfield.example', 'analyst2@quillfield.example'].includes(u.email))) {
    if (!(await knex('users').where({ email: user.email }).first())) await upsertUser(user);
  }
  let server: { child: ChildProcess; port: number } | null = null;
  try {
    let started = performance.now();
    const { symbols, dates } = await ensureUniverse(knex);
    console.log(`  universe ready: ${N} assets × ${T} dates in ${((performance.now() - started) / 1000).toFixed(1)} s`);
    const faRun = await storeRun(knex, symbols, dates, 'fa');
    await storeRun(knex, symbols, dates, 'ppca');
    const portfolioId = await ensurePortfolio(knex, symbols);
    server = await startServer();
    const base = `http://127.0.0.1:${server.port}`;
    const signIn = await fetch(`${base}/api/auth/sign-in`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email: 'pm@quillfield.example', password: 'demo-pm-pass' }) });
    const { token } = (await signIn.json()) as { token: string };
    const url = `${base}/api/portfolios/${portfolioId}/risk?model=${faRun}`;
    started = performance.now();
    const first = await fetch(url, { headers: { authorization: `Bearer ${token}` } });
    const firstBody = (await first.json()) as { volatilities?: { estimator: string; annualisedVolatility: number | null }[]; contributors?: unknown[]; error?: string };
    if (first.status !== 200) throw new Error(`risk request failed: ${first.status} ${JSON.stringify(firstBody)}`);
    console.log(`  first request (loads the model, sample and Ledoit–Wolf on the window into memory): ${(performance.now() - started).toFixed(0)} ms`);
    console.log(`  volatilities: ${firstBody.volatilities!.map((v) => `${v.estimator} ${((v.annualisedVolatility ?? NaN) * 100).toFixed(2)} %`).join(', ')}; ${firstBody.contributors!.length} contributors listed (default), answer ${(Number(first.headers.get('content-length')) / 1024).toFixed(1)} KB`);
    for (let k = 0; k < 50; k++) await (await fetch(url, { headers: { authorization: `Bearer ${token}` } })).arrayBuffer(); // JIT warm-up

    // GET answers for the same portfolio version, models and parameters are kept per process (portfolioRiskJson).
    const cpuBefore = await serverCpuMs(server.child);
    const get = await load(url, token, 'GET');
    const cpuPerRequest = ((await serverCpuMs(server.child)) - cpuBefore) / get.times.length;
    const getP95 = percentile(get.times, 95);
    console.log(
      `  GET risk (saved portfolio; repeat views answered from the per-process answer cache), ${HOLDINGS} holdings on ${N} assets, ${CONNECTIONS} clients, ${DURATION_S} s: ${get.times.length} requests, ${get.result.requests.average.toFixed(0)} req/s, ` +
        `p50 ${percentile(get.times, 50).toFixed(1)} ms, p95 ${getP95.toFixed(1)} ms, p99 ${percentile(get.times, 99).toFixed(1)} ms, non-200: ${get.errors} ` +
        `— target p95 ≤ 50 ms: ${getP95 <= 50 ? 'met' : 'NOT met'}`,
    );
    console.log(`  server CPU per GET: ${cpuPerRequest.toFixed(2)} ms (user + system, whole process); machine load average ${loadavg()[0].toFixed(1)} on ${cpus().length} cores`);
    // The same request from a script with a named API token (token and user read from the database each time).
    const minted = await fetch(`${base}/api/tokens`, { method: 'POST', headers: { authorization: `Bearer ${token}`, 'content-type': 'application/json' }, body: JSON.stringify({ name: `bench ${Date.now()}` }) });
    const { secret } = (await minted.json()) as { secret: string };
    const cpuBeforeScript = await serverCpuMs(server.child);
    const script = await load(url, secret, 'GET');
    const scriptCpu = ((await serverCpuMs(server.child)) - cpuBeforeScript) / script.times.length;
    const scriptP95 = percentile(script.times, 95);
    console.log(
      `  GET risk with an API token (a script), ${CONNECTIONS} clients: ${script.times.length} requests, ${script.result.requests.average.toFixed(0)} req/s, p50 ${percentile(script.times, 50).toFixed(1)} ms, ` +
        `p95 ${scriptP95.toFixed(1)} ms, p99 ${percentile(script.times, 99).toFixed(1)} ms, non-200: ${script.errors}; server CPU per request ${scriptCpu.toFixed(2)} ms — p95 ≤ 50 ms: ${scriptP95 <= 50 ? 'met' : 'NOT met'}`,
    );
    // The risk page's own request: every contributor and the factor return history (135 KB instead of about 9 KB).
    const cpuBeforeFull = await serverCpuMs(server.child);
    const full = await load(`${url}&contributors=all&history=true`, token, 'GET');
    const fullCpu = ((await serverCpuMs(server.child)) - cpuBeforeFull) / full.times.length;
    console.log(
      `  GET risk with contributors=all&history=true (the risk page's request), ${CONNECTIONS} clients: ${full.times.length} requests, ${full.result.requests.average.toFixed(0)} req/s, ` +
        `p50 ${percentile(full.times, 50).toFixed(1)} ms, p95 ${percentile(full.times, 95).toFixed(1)} ms, p99 ${percentile(full.times, 99).toFixed(1)} ms, non-200: ${full.errors}; ` +
        `${(full.result.throughput.average / Math.max(full.result.requests.average, 1) / 1024).toFixed(0)} KB per answer, server CPU per request ${fullCpu.toFixed(2)} ms (reported, no target)`,
    );
    const held = symbols.filter((_, i) => i % 2 === 0).slice(0, HOLDINGS);
    // Every what-if request moves a different holding's weight, so each answer is computed afresh (never kept).
    const makeBody = (n: number) => JSON.stringify({ model: faRun, holdings: held.map((symbol, i) => ({ symbol, weight: 1 / HOLDINGS + (i === n % HOLDINGS ? 0.01 + n * 1e-7 : 0) })) });
    const cpuBeforeWhatIf = await serverCpuMs(server.child);
    const whatIf = await load(`${base}/api/portfolios/${portfolioId}/risk/what-if`, token, 'POST', makeBody);
    const whatIfCpu = ((await serverCpuMs(server.child)) - cpuBeforeWhatIf) / whatIf.times.length;
    const whatIfP95 = percentile(whatIf.times, 95);
    console.log(
      `  POST what-if (different weights in every request, computed afresh), ${CONNECTIONS} clients: ${whatIf.times.length} requests, p50 ${percentile(whatIf.times, 50).toFixed(1)} ms, ` +
        `p95 ${whatIfP95.toFixed(1)} ms, p99 ${percentile(whatIf.times, 99).toFixed(1)} ms, non-200: ${whatIf.errors}; server CPU per request ${whatIfCpu.toFixed(2)} ms (reported, no target)`,
    );
  } finally {
    if (server) {
      const exited = new Promise((done) => server!.child.once('exit', done));
      server.child.kill('SIGTERM');
      await Promise.race([exited, new Promise((done) => setTimeout(done, 5000))]);
      if (server.child.exitCode === null) server.child.kill('SIGKILL');
    }
    await knex.destroy();
  }
}
