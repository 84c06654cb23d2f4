// Import benchmark (`npm run bench -- import`): 2.5 million observations (1000 invented assets × 2500 business
// days, long CSV) uploaded through the API end to end to a server in a child process, beside `psql \copy` of the
// same rows into a table of the same shape (primary key and date index, and the rows return_observations already
// holds) in the same run, once before and once after the API import.
// Targets: API time ≤ 1.5 × the \copy time; the server's peak RSS (VmHWM) under 300 MB.
import { spawnSync } from 'node:child_process';
import { createWriteStream, mkdtempSync, readFileSync, rmSync, statSync } from 'node:fs';
import { cpus, loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { randomUUID } from 'node:crypto';
import type { Knex } from 'knex';
import { createKnex, bindModels, migrateLatest } from '../server/db/knex';
import { ensureDatabase } from '../scripts/database';
import { upsertUser } from '../server/services/authService';
import { businessDays } from '../server/demo/returns';
import { createRandom } from '../server/engine/random';
import { signInHttp, startServerProcess, streamUpload } from '../tests/helpers/httpUpload';

const ASSETS = Number(process.env.BENCH_IMPORT_ASSETS ?? 1000);
const DATES = Number(process.env.BENCH_IMPORT_DATES ?? 2500);
const BENCH_USER = { email: 'bench-analyst@quillfield.example', name: 'Benchmark analyst', role: 'analyst' as const, password: 'bench-only-password-7151' };

/** Invented long CSV: date-major, values with 8 decimals. */
async function writeFile(path: string, prefix: string): Promise<number> {
  const rng = createRandom(7);
  const dates = businessDays('2016-01-01', '2030-12-31').slice(0, DATES);
  const symbols = Array.from({ length: ASSETS }, (_, i) => `${prefix}${String(i).padStart(4, '0')}`);
  const out = createWriteStream(path);
  out.write('date,symbol,value\n');
  for (const date of dates) {
    let block = '';
    for (const symbol of symbols) block += `${date},${symbol},${(0.015 * rng.normal()).toFixed(8)}\n`;
    if (!out.write(block)) await new Promise<void>((r) => out.once('drain', () => r()));
  }
  await new Promise<void>((r) => out.end(r));
  return dates.length * symbols.length;
}

async function removeBenchData(knex: Knex): Promise<void> {
  await knex.raw(`DELETE FROM assets WHERE symbol LIKE 'BNX%'`);
  await knex('import_batches').where({ user_email: BENCH_USER.email }).delete();
}

/** `psql \copy` of the file into a fresh table shaped like return_observations and pre-filled with its rows. */
async function timedCopy(knex: Knex, url: string, file: string): Promise<number> {
  await knex.raw('DROP TABLE IF EXISTS bench_copy_target');
  await knex.raw(`CREATE TABLE bench_copy_target AS SELECT o.date, a.symbol, o.value FROM return_observations o JOIN assets a ON a.id = o.asset_id WHERE a.symbol NOT LIKE 'BNX%'`);
  await knex.raw('ALTER TABLE bench_copy_target ALTER date SET NOT NULL, ALTER symbol SET NOT NULL, ALTER value SET NOT NULL, ADD PRIMARY KEY (symbol, date)');
  await knex.raw('CREATE INDEX bench_copy_target_date ON bench_copy_target (date, symbol)');
  await knex.raw('CHECKPOINT');
  const started = process.hrtime.bigint();
  const copy = spawnSync('psql', [url, '-v', 'ON_ERROR_STOP=1', '-q', '-c', `\\copy bench_copy_target (date, symbol, value) FROM '${file}' WITH (FORMAT csv, HEADER true)`], { encoding: 'utf8' });
  const seconds = Number(process.hrtime.bigint() - started) / 1e9;
  if (copy.status !== 0) throw new Error(`psql \\copy failed: ${copy.stderr}`);
  await knex.raw('DROP TABLE bench_copy_target');
  return seconds;
}

function peakRssMb(pid: number): number {
  const status = readFileSync(`/proc/${pid}/status`, 'utf8');
  const kb = Number(/VmHWM:\s+(\d+)/.exec(status)?.[1] ?? 0);
  return kb / 1024;
}

export default async function run(): Promise<void> {
  const url = process.env.DATABASE_URL;
  if (!url) throw new Error('DATABASE_URL is not set: run through `npm run bench`');
  await ensureDatabase(url, process.env.LOADLINE_ADMIN_DATABASE_URL ?? '');
  const knex = createKnex(url, { max: 2 });
  bindModels(knex);
  await migrateLatest(knex);
  await upsertUser(BENCH_USER);
  // Other benchmarks share this database: this one only touches its own symbols (BNX…) and batches.
  await removeBenchData(knex);

  const dir = mkdtempSync(join(tmpdir(), 'loadline-bench-import-'));
  const file = join(dir, 'bench-returns.csv');
  try {
    const rows = await writeFile(file, `BNX${Date.now().toString(36).slice(-4).toUpperCase()}`);
    const size = statSync(file).size;
    console.log(`file: ${rows.toLocaleString('en')} observations (${ASSETS} assets × ${DATES} dates), ${(size / 1024 / 1024).toFixed(1)} MB`);

    // 1. psql \copy into a table of the same shape (primary key and a date index) holding the same rows already
    //    stored in return_observations, committed. Run before and after the API import: the machine is shared,
    //    so the ratio uses their mean.
    const copyBefore = await timedCopy(knex, url, file);
    // 2. The API, end to end: multipart upload, parse, checks, COPY to staging, merge, commit.
    await knex.raw('CHECKPOINT');
    const { url: baseUrl, child } = await startServerProcess({ DATABASE_URL: url });
    try {
      const token = await signInHttp(baseUrl, BENCH_USER.email, BENCH_USER.password);
      const idleRss = peakRssMb(child.pid!);
      const apiStart = process.hrtime.bigint();
      const upload = streamUpload(baseUrl, token, file, { mode: 'commit', format: 'long', valueKind: 'simple-decimal', overlap: 'skip', frequency: 'daily' }, randomUUID());
      const answer = await upload.answer;
      const apiSeconds = Number(process.hrtime.bigint() - apiStart) / 1e9;
      const peak = peakRssMb(child.pid!);
      if (answer.status !== 201) throw new Error(`import answered ${answer.status}: ${JSON.stringify(answer.body).slice(0, 500)}`);
      if (answer.body.counts.inserted !== rows) throw new Error(`inserted ${answer.body.counts.inserted}, expected ${rows}`);
      const stored = await knex('return_observations').count<{ n: number }[]>({ n: '*' }).first();
      const copyAfter = await timedCopy(knex, url, file);
      const copySeconds = (copyBefore + copyAfter) / 2;
      const ratio = apiSeconds / copySeconds;
      console.log(`machine load (1 min):  ${loadavg()[0].toFixed(1)} on ${cpus().length} CPUs`);
      console.log(`psql \\copy:            ${copyBefore.toFixed(2)} s before, ${copyAfter.toFixed(2)} s after the API import (mean ${copySeconds.toFixed(2)} s)`);
      console.log(`API import end to end: ${apiSeconds.toFixed(2)} s (server-side ${answer.body.durationMs} ms; ${Number(stored?.n).toLocaleString('en')} rows stored)`);
      console.log(`ratio API / \\copy:     ${ratio.toFixed(2)} × (target ≤ 1.5 ×) ${ratio <= 1.5 ? 'MET' : 'NOT MET'}`);
      console.log(`server peak RSS:       ${peak.toFixed(0)} MB (idle ${idleRss.toFixed(0)} MB; target < 300 MB) ${peak < 300 ? 'MET' : 'NOT MET'}`);
    } finally {
      child.kill('SIGTERM');
      await new Promise((done) => child.once('exit', done));
    }
  } finally {
    rmSync(dir, { recursive: true, force: true });
    await removeBenchData(knex);
    await knex.destroy();
  }
}
