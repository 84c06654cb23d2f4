// New and known assets in an import's summary: a file naming one asset unknown to the database and one already
// stored. Whether an asset is new does not depend on the file's other rows, so a file with errors reports the same
// split as a clean one (it used to report "0 new" and mark no asset new as soon as the file had an error).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { testContext, signIn, unique } from '../helpers/app';
import { storedFor, upload } from '../helpers/imports';

const ctx = testContext();
const scratch = mkdtempSync(join(tmpdir(), 'loadline-import-newasset-'));
let analyst: string;
/** Every symbol of this file starts with it: exact counts hold whatever else the shared database holds. */
const prefix = unique('NA').toUpperCase();
const KNOWN = `${prefix}KNOWN`;

function csv(name: string, lines: string[]): string {
  const path = join(scratch, `${name}.csv`);
  writeFileSync(path, `date,symbol,value\n${lines.join('\n')}\n`);
  return path;
}

/** The summary's new/known split as the client shows it. */
function split(body: { counts: { assetsFound: number; assetsNew: number }; assets: { symbol: string; isNew: boolean }[] }) {
  return {
    found: body.counts.assetsFound,
    new: body.counts.assetsNew,
    known: body.counts.assetsFound - body.counts.assetsNew,
    flags: Object.fromEntries(body.assets.map((a) => [a.symbol, a.isNew])),
  };
}

beforeAll(async () => {
  analyst = await signIn(ctx.app, 'analyst');
  // The known asset: stored by a committed import of this test (dates no other file here uses).
  const res = await upload(ctx.app, analyst, csv('known', [`2019-03-04,${KNOWN},0.001`, `2019-03-05,${KNOWN},0.002`]), { mode: 'commit', overlap: 'skip' });
  expect(res.status).toBe(201);
  expect(res.body.counts).toMatchObject({ inserted: 2, assetsFound: 1, assetsNew: 1 });
});
afterAll(() => ctx.close());

describe('preview of a file with one unknown and one known symbol', () => {
  it('a clean file: 2 found, 1 new, 1 known; only the unknown symbol is marked new; nothing stored', async () => {
    const fresh = `${prefix}NEWA`;
    const file = csv('clean', [`2019-03-11,${fresh},0.01`, `2019-03-11,${KNOWN},0.02`, `2019-03-12,${fresh},-0.01`, `2019-03-12,${KNOWN},0.005`]);
    const res = await upload(ctx.app, analyst, file, { mode: 'preview', overlap: 'skip' });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ status: 'previewed', errorCount: 0, canCommit: true });
    expect(split(res.body)).toEqual({ found: 2, new: 1, known: 1, flags: { [fresh]: true, [KNOWN]: false } });
    expect(res.body.counts).toMatchObject({ observations: 4, inserted: 4 });
    expect(await storedFor(ctx.knex, prefix)).toEqual({ assets: 1, observations: 2, revisions: 0 });
  });

  it('a file with a bad value: still 1 new and 1 known (the error does not hide the new asset)', async () => {
    const fresh = `${prefix}NEWB`;
    const file = csv('bad-value', [`2019-03-11,${fresh},0.01`, `2019-03-11,${KNOWN},abc`, `2019-03-12,${fresh},-0.01`, `2019-03-12,${KNOWN},0.005`]);
    const res = await upload(ctx.app, analyst, file, { mode: 'preview', overlap: 'skip' });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ status: 'rejected', errorCount: 1, canCommit: false });
    expect(res.body.problems[0]).toMatchObject({ row: 3, column: 'value', code: 'not-a-number' });
    expect(split(res.body)).toEqual({ found: 2, new: 1, known: 1, flags: { [fresh]: true, [KNOWN]: false } });
    expect(await storedFor(ctx.knex, prefix)).toEqual({ assets: 1, observations: 2, revisions: 0 });
  });

  it('a file of another frequency than the stored series (weekly): still 1 new and 1 known', async () => {
    const fresh = `${prefix}NEWC`;
    const file = csv('weekly', [
      `2019-04-01,${fresh},0.01`, `2019-04-01,${KNOWN},0.02`,
      `2019-04-08,${fresh},0.01`, `2019-04-08,${KNOWN},0.02`,
      `2019-04-15,${fresh},0.01`, `2019-04-15,${KNOWN},0.02`,
    ]);
    const res = await upload(ctx.app, analyst, file, { mode: 'preview', overlap: 'skip' });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ status: 'rejected', detectedFrequency: 'weekly' });
    expect(res.body.problems.map((p: { code: string }) => p.code)).toContain('frequency-mismatch');
    expect(split(res.body)).toEqual({ found: 2, new: 1, known: 1, flags: { [fresh]: true, [KNOWN]: false } });
  });

  it('a commit refused for an error names the same split, creates no asset and records none as created', async () => {
    const fresh = `${prefix}NEWD`;
    const file = csv('bad-commit', [`2019-03-18,${fresh},0.01`, `2019-03-18,${KNOWN},0.02`, `2019-03-19,${fresh},oops`, `2019-03-19,${KNOWN},0.005`]);
    const res = await upload(ctx.app, analyst, file, { mode: 'commit', overlap: 'skip' });
    expect(res.status).toBe(422);
    expect(split(res.body.summary)).toEqual({ found: 2, new: 1, known: 1, flags: { [fresh]: true, [KNOWN]: false } });
    expect(await storedFor(ctx.knex, prefix)).toEqual({ assets: 1, observations: 2, revisions: 0 });
    const batch = await ctx.knex('import_batches').where({ id: res.body.summary.id }).first('status', 'assets_created');
    expect(batch).toEqual({ status: 'rejected', assets_created: 0 });
  });
});
