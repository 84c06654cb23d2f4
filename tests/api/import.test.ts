// Return-series imports through the real API and PostgreSQL: every accepted format, every kind of bad input,
// each followed by a look at the main tables.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { randomUUID } from 'node:crypto';
import { writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import request from 'supertest';
import { testContext, signIn, unique } from '../helpers/app';
import { bindModels } from '../../server/db/knex';
import { fixtureCopy, upload, storedFor, seriesOf } from '../helpers/imports';

const ctx = testContext();
let analyst: string;
let pm: string;
let compliance: string;
const prefix = () => unique('Q').toUpperCase().slice(0, 12);

beforeAll(async () => {
  analyst = await signIn(ctx.app, 'analyst');
  pm = await signIn(ctx.app, 'pm');
  compliance = await signIn(ctx.app, 'compliance');
});
afterAll(() => ctx.close());

describe('accepted formats', () => {
  it('long, comma, ISO, simple decimals: preview stores nothing, commit stores exactly the file', async () => {
    const p = prefix();
    const file = fixtureCopy('long-simple-decimal.csv', p);
    const preview = await upload(ctx.app, analyst, file, { mode: 'preview' });
    expect(preview.status).toBe(200);
    expect(preview.body).toMatchObject({ status: 'previewed', delimiter: 'comma', detectedFrequency: 'daily', firstDate: '2024-01-02', errorCount: 0, canCommit: true });
    expect(preview.body.counts).toMatchObject({ rowsRead: 90, observations: 90, inserted: 90, assetsFound: 3, assetsNew: 3 });
    expect(preview.body.previewRows[0]).toEqual({ row: 2, date: '2024-01-02', symbol: `${p}AAA`, value: 0.000998 });
    expect(await storedFor(ctx.knex, p)).toEqual({ assets: 0, observations: 0, revisions: 0 });

    const commit = await request(ctx.app).post(`/api/imports/${preview.body.id}/commit`).set('Authorization', `Bearer ${analyst}`).send({});
    expect(commit.status).toBe(201);
    expect(commit.body).toMatchObject({ status: 'committed', id: preview.body.id });
    expect(commit.body.counts).toMatchObject({ inserted: 90, replaced: 0, skipped: 0, assetsNew: 3 });
    expect(await storedFor(ctx.knex, p)).toEqual({ assets: 3, observations: 90, revisions: 0 });
    const series = await seriesOf(ctx.knex, `${p}BBB`);
    expect(series[0]).toEqual({ date: '2024-01-02', value: 0.007174 });

    const batch = await ctx.knex('import_batches').where({ id: preview.body.id }).first();
    expect(batch).toMatchObject({ status: 'committed', rows_read: 90, inserted: 90, frequency: 'daily', user_email: 'analyst@quillfield.example' });
    expect(batch.sha256).toMatch(/^[0-9a-f]{64}$/);
    const audit = await ctx.knex('audit_events').where({ action: 'import.committed', object_id: String(preview.body.id) }).first();
    expect(audit).toBeTruthy();
  });

  it('long, semicolon, BOM, quoted fields, CRLF, percent: converted to decimals, NA counted as missing', async () => {
    const p = prefix();
    const res = await upload(ctx.app, analyst, fixtureCopy('long-percent-semicolon.csv', p), { mode: 'commit', valueKind: 'simple-percent' });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ delimiter: 'semicolon', status: 'committed' });
    expect(res.body.counts).toMatchObject({ rowsRead: 40, missingValues: 1, inserted: 39 });
    expect(await storedFor(ctx.knex, p)).toEqual({ assets: 2, observations: 39, revisions: 0 });
    const series = await seriesOf(ctx.knex, `${p}DDD`);
    expect(series[0].value).toBe(0.099833 / 100);
  });

  it('wide, tab, log returns: stored as simple returns exp(r) − 1; empty cells are missing', async () => {
    const p = prefix();
    const res = await upload(ctx.app, analyst, fixtureCopy('wide-log-tab.tsv', p), { mode: 'commit', format: 'wide', valueKind: 'log' });
    expect(res.status).toBe(201);
    expect(res.body.delimiter).toBe('tab');
    expect(res.body.counts).toMatchObject({ rowsRead: 25, valuesRead: 73, missingValues: 2, inserted: 73, assetsNew: 3 });
    expect(await storedFor(ctx.knex, p)).toEqual({ assets: 3, observations: 73, revisions: 0 });
    const series = await seriesOf(ctx.knex, `${p}FFF`);
    expect(series[0].value).toBe(Math.expm1(0.001997));
  });

  it('wide prices with day-first dates and a late listing: returns over consecutive available dates', async () => {
    const p = prefix();
    const res = await upload(ctx.app, analyst, fixtureCopy('wide-price-dayfirst.csv', p), { mode: 'commit', format: 'wide', valueKind: 'price', dateFormat: 'day-first' });
    expect(res.status).toBe(201);
    // 15 + 10 prices, each asset's first price yields no return.
    expect(res.body.counts).toMatchObject({ valuesRead: 25, firstPrices: 2, observations: 23, inserted: 23 });
    expect(await storedFor(ctx.knex, p)).toEqual({ assets: 2, observations: 23, revisions: 0 });
    const late = await seriesOf(ctx.knex, `${p}JJJ`);
    expect(late[0].date).toBe('2024-01-10'); // the 7th business day: 6th price row is the first return
    expect(late).toHaveLength(9);
    const first = await seriesOf(ctx.knex, `${p}III`);
    expect(first[0]).toEqual({ date: '2024-01-03', value: 102.1745 / 100.1997 - 1 });
  });

  it('long prices, month-first dates, rows in any order: converted per asset in date order', async () => {
    const p = prefix();
    const res = await upload(ctx.app, analyst, fixtureCopy('long-price-monthfirst-unsorted.csv', p), { mode: 'commit', valueKind: 'price', dateFormat: 'month-first' });
    expect(res.status).toBe(201);
    expect(res.body.counts).toMatchObject({ valuesRead: 24, firstPrices: 2, inserted: 22 });
    const series = await seriesOf(ctx.knex, `${p}KKK`);
    expect(series).toHaveLength(11);
    expect(series.map((s) => s.date)).toEqual([...series.map((s) => s.date)].sort());
  });

  it('weekly data is detected; committing it into the daily dataset is refused and stores nothing', async () => {
    const p = prefix();
    const file = fixtureCopy('weekly-long.csv', p);
    const preview = await upload(ctx.app, analyst, file, { mode: 'preview' });
    expect(preview.body.detectedFrequency).toBe('weekly');
    expect(preview.body.problems.map((x: { code: string }) => x.code)).toContain('frequency-mismatch');
    const commit = await upload(ctx.app, analyst, file, { mode: 'commit' });
    expect(commit.status).toBe(422);
    expect(await storedFor(ctx.knex, p)).toEqual({ assets: 0, observations: 0, revisions: 0 });
  });

  it('warnings (large return, weekend date, long gap) are reported and the data kept', async () => {
    const p = prefix();
    const res = await upload(ctx.app, analyst, fixtureCopy('warnings.csv', p), { mode: 'commit' });
    expect(res.status).toBe(201);
    const codes = res.body.problems.map((x: { code: string }) => x.code).sort();
    expect(codes).toEqual(['gap', 'large-return', 'weekend']);
    expect(res.body.warningCount).toBe(3);
    expect(res.body.problems.find((x: { code: string }) => x.code === 'large-return')).toMatchObject({ row: 4, column: 'value' });
    expect(res.body.problemsCsvUrl).toBe(`/api/imports/${res.body.id}/problems.csv`);
    expect(await storedFor(ctx.knex, p)).toMatchObject({ observations: 16 });
  });
});

describe('overlap policies, revisions and re-imports', () => {
  it('reject refuses overlapping data; skip keeps stored values; replace records revisions', async () => {
    const p = prefix();
    const file = fixtureCopy('long-simple-decimal.csv', p);
    expect((await upload(ctx.app, analyst, file, { mode: 'commit' })).status).toBe(201);

    // The same rows with changed values for one symbol.
    const changed = join(tmpdir(), `${p}-changed.csv`);
    const { readFileSync } = await import('node:fs');
    const lines = readFileSync(file, 'utf8').trim().split('\n');
    writeFileSync(changed, [lines[0], ...lines.slice(1).map((l) => (l.includes(`${p}CCC`) ? l.replace(/,[^,]+$/, ',0.0123') : l))].join('\n') + '\n');

    expect(readFileSync(changed, 'utf8')).not.toBe(readFileSync(file, 'utf8'));
    const rejected = await upload(ctx.app, analyst, changed, { mode: 'commit', overlap: 'reject' });
    expect(rejected.status).toBe(422);
    expect(rejected.body.issues[0]).toMatchObject({ path: `row 2, ${p}AAA` });
    expect(rejected.body.summary.counts.rejected).toBe(90);
    expect(await storedFor(ctx.knex, p)).toEqual({ assets: 3, observations: 90, revisions: 0 });

    const skipped = await upload(ctx.app, analyst, changed, { mode: 'commit', overlap: 'skip' });
    expect(skipped.status).toBe(201);
    expect(skipped.body.counts).toMatchObject({ inserted: 0, skipped: 90, replaced: 0 });
    expect((await seriesOf(ctx.knex, `${p}CCC`))[0].value).not.toBe(0.0123);

    const replaced = await upload(ctx.app, analyst, changed, { mode: 'commit', overlap: 'replace', confirmReimport: true });
    expect(replaced.status).toBe(201);
    expect(replaced.body.counts).toMatchObject({ inserted: 0, replaced: 30, unchanged: 60 });
    expect(await storedFor(ctx.knex, p)).toEqual({ assets: 3, observations: 90, revisions: 30 });
    expect((await seriesOf(ctx.knex, `${p}CCC`)).every((s) => s.value === 0.0123)).toBe(true);

    const detail = await request(ctx.app).get(`/api/imports/${replaced.body.id}`).set('Authorization', `Bearer ${compliance}`);
    expect(detail.status).toBe(200);
    expect(detail.body.revisionCount).toBe(30);
    expect(detail.body.revisions[0]).toMatchObject({ symbol: `${p}CCC`, date: '2024-01-02', newValue: 0.0123 });
  });

  it('the same file again (same SHA-256) needs confirmation', async () => {
    const p = prefix();
    const file = fixtureCopy('long-simple-decimal.csv', p);
    expect((await upload(ctx.app, analyst, file, { mode: 'commit' })).status).toBe(201);
    const again = await upload(ctx.app, analyst, file, { mode: 'commit', overlap: 'skip' });
    expect(again.status).toBe(409);
    expect(again.body.error).toMatch(/already imported/);
    const preview = await upload(ctx.app, analyst, file, { mode: 'preview', overlap: 'skip' });
    expect(preview.body.alreadyImported).toMatchObject({ batchId: expect.any(Number) });
    const confirmed = await upload(ctx.app, analyst, file, { mode: 'commit', overlap: 'skip', confirmReimport: true });
    expect(confirmed.status).toBe(201);
    expect(confirmed.body.counts).toMatchObject({ inserted: 0, skipped: 90 });
    expect(await storedFor(ctx.knex, p)).toEqual({ assets: 3, observations: 90, revisions: 0 });
  });
});

describe('bad input: a clear 422 naming row and column, nothing stored', () => {
  const cases: { file: string; fields?: Record<string, string>; code: string; row: number | null; column?: string | null; message: RegExp }[] = [
    { file: 'empty.csv', code: 'empty-file', row: null, message: /empty/ },
    { file: 'header-only.csv', code: 'empty-file', row: null, message: /no data rows/ },
    { file: 'missing-column.csv', code: 'header-missing', row: 1, column: 'value', message: /no "value" column/ },
    { file: 'duplicate-header.csv', fields: { format: 'wide' }, code: 'header-duplicate', row: 1, message: /appears twice \(columns 2 and 4\)/ },
    { file: 'non-numeric.csv', code: 'not-a-number', row: 3, column: 'value', message: /"abc" is not a number/ },
    { file: 'out-of-range.csv', code: 'not-a-number', row: 3, column: 'value', message: /"1e400" is out of range/ },
    { file: 'duplicate-rows.csv', code: 'duplicate', row: 4, column: 'value', message: /on 2024-01-02 appears more than once/ },
    { file: 'bad-dates.csv', code: 'bad-date', row: 3, column: 'date', message: /day 30 does not exist/ },
    { file: 'ambiguous-dates.csv', code: 'bad-date', row: 2, column: 'date', message: /not an ISO 8601 date.*day-first or month-first/ },
    { file: 'impossible-return.csv', code: 'impossible-return', row: 3, column: 'value', message: /loss of 100 % or more/ },
    { file: 'impossible-percent.csv', fields: { valueKind: 'simple-percent' }, code: 'impossible-return', row: 3, column: 'value', message: /-100 %/ },
    { file: 'non-positive-price.csv', fields: { format: 'wide', valueKind: 'price' }, code: 'non-positive-price', row: 3, message: /price must be positive, got 0/ },
    { file: 'column-count.csv', code: 'column-count', row: 3, column: null, message: /has 2 fields; the header has 3/ },
    { file: 'malformed-quote.csv', code: 'malformed-csv', row: null, message: /not well-formed CSV/ },
  ];
  for (const c of cases) {
    it(`${c.file}: ${c.code}`, async () => {
      const p = prefix();
      const res = await upload(ctx.app, analyst, fixtureCopy(c.file, p), { mode: 'commit', ...(c.fields ?? {}) });
      expect(res.status).toBe(422);
      expect(res.body.error).toMatch(/nothing was stored/);
      const problem = res.body.summary.problems.find((x: { code: string }) => x.code === c.code);
      expect(problem, JSON.stringify(res.body.summary.problems)).toBeTruthy();
      if (c.row !== null) expect(problem.row).toBe(c.row);
      if (c.column !== undefined) expect(problem.column).toBe(c.column);
      expect(problem.message).toMatch(c.message);
      expect(await storedFor(ctx.knex, p)).toEqual({ assets: 0, observations: 0, revisions: 0 });
      const batch = await ctx.knex('import_batches').where({ id: res.body.summary.id }).first();
      expect(batch.status).toBe('rejected');
    });
  }

  it('bad dates: every bad row is listed, and the full list downloads as CSV', async () => {
    const p = prefix();
    const res = await upload(ctx.app, analyst, fixtureCopy('bad-dates.csv', p), { mode: 'preview' });
    expect(res.status).toBe(200);
    expect(res.body.canCommit).toBe(false);
    expect(res.body.problems.map((x: { row: number }) => x.row)).toEqual([3, 4, 5]);
    const csv = await request(ctx.app).get(res.body.problemsCsvUrl).set('Authorization', `Bearer ${pm}`);
    expect(csv.status).toBe(200);
    expect(csv.headers['content-type']).toMatch(/text\/csv/);
    const lines = csv.text.trim().split('\n');
    expect(lines[0]).toBe('severity,row,column,code,message');
    expect(lines).toHaveLength(4);
    expect(lines[2]).toMatch(/^error,4,date,bad-date,.*month 13 does not exist/);
  });

  it('more than 100 problems: the answer lists the first 100, the CSV all of them', async () => {
    const p = prefix();
    const path = join(tmpdir(), `${p}-many.csv`);
    writeFileSync(path, 'date,symbol,value\n' + Array.from({ length: 250 }, (_, i) => `2024-01-02,${p}M${i},x${i}`).join('\n') + '\n');
    const res = await upload(ctx.app, analyst, path, { mode: 'commit' });
    expect(res.status).toBe(422);
    expect(res.body.summary.errorCount).toBe(250);
    expect(res.body.summary.problems).toHaveLength(100);
    expect(res.body.issues).toHaveLength(100);
    const csv = await request(ctx.app).get(res.body.summary.problemsCsvUrl).set('Authorization', `Bearer ${analyst}`);
    expect(csv.text.trim().split('\n')).toHaveLength(251);
    expect(await storedFor(ctx.knex, p)).toEqual({ assets: 0, observations: 0, revisions: 0 });
  });

  it('a file beyond the upload limit gets a clear 413 and nothing is stored', async () => {
    const small = testContext({ uploadLimitBytes: 1024 });
    try {
      const token = await signIn(small.app, 'analyst');
      const p = prefix();
      const path = join(tmpdir(), `${p}-big.csv`);
      writeFileSync(path, 'date,symbol,value\n' + Array.from({ length: 200 }, (_, i) => `2024-01-02,${p}B${i},0.01`).join('\n') + '\n');
      const res = await upload(small.app, token, path, { mode: 'commit' });
      expect(res.status).toBe(413);
      expect(res.body.error).toBe('The file is larger than the upload limit of 0 MB');
      expect(await storedFor(ctx.knex, p)).toEqual({ assets: 0, observations: 0, revisions: 0 });
    } finally {
      await small.close();
      bindModels(ctx.knex); // the second context bound the models to its own pool
    }
  });

  it('bad option values and a missing file are 422 with the field named', async () => {
    const p = prefix();
    const res = await upload(ctx.app, analyst, fixtureCopy('long-simple-decimal.csv', p), { valueKind: 'bananas' });
    expect(res.status).toBe(422);
    expect(res.body.issues[0].path).toBe('valueKind');
    const none = await request(ctx.app).post('/api/imports').set('Authorization', `Bearer ${analyst}`).field('mode', 'commit');
    expect(none.status).toBe(422);
    expect(none.body.issues[0].path).toBe('file');
    expect(await storedFor(ctx.knex, p)).toEqual({ assets: 0, observations: 0, revisions: 0 });
  });
});

describe('roles', () => {
  it('portfolio managers and compliance may read but not import', async () => {
    // Refused before the body is read (so only the form fields are sent: a file part could meet a closed socket).
    const attempt = (token?: string) => {
      const req = request(ctx.app).post('/api/imports');
      if (token) req.set('Authorization', `Bearer ${token}`);
      return req.field('mode', 'commit');
    };
    expect((await attempt(pm)).status).toBe(403);
    expect((await attempt(compliance)).status).toBe(403);
    expect((await attempt()).status).toBe(401);
    expect((await request(ctx.app).get('/api/imports').set('Authorization', `Bearer ${pm}`)).status).toBe(200);
  });

  it('processing progress is readable by the uploader under the ref it chose', async () => {
    const p = prefix();
    const ref = randomUUID();
    const res = await upload(ctx.app, analyst, fixtureCopy('long-simple-decimal.csv', p), { mode: 'preview' }, ref);
    expect(res.body.ref).toBe(ref);
    const progress = await request(ctx.app).get(`/api/imports/progress/${ref}`).set('Authorization', `Bearer ${analyst}`);
    expect(progress.body).toMatchObject({ phase: 'done', rowsRead: 90 });
  });
});
