// An import cut off mid-stream — the client disconnecting, or the server process killed with SIGKILL while the
// COPY runs — leaves the main tables exactly as they were: the import's transaction never commits.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { randomUUID } from 'node:crypto';
import { createWriteStream, mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Server } from 'node:http';
import { testContext, demoUser, unique } from '../helpers/app';
import { storedFor } from '../helpers/imports';
import { jsonRequest, signInHttp, startServerProcess, streamUpload, waitFor } from '../helpers/httpUpload';
import { businessDays } from '../../server/demo/returns';

const ctx = testContext();
let server: Server;
let baseUrl: string;
const dir = mkdtempSync(join(tmpdir(), 'loadline-interrupt-'));

/** A long CSV big enough to take a few seconds to process: assets × business days from 2015. */
async function bigFile(prefix: string, assets: number, days: number): Promise<string> {
  const path = join(dir, `${prefix}.csv`);
  const out = createWriteStream(path);
  out.write('date,symbol,value\n');
  const dates = businessDays('2015-01-01', '2030-01-01').slice(0, days);
  for (const date of dates) {
    let block = '';
    for (let a = 0; a < assets; a++) block += `${date},${prefix}${a},${(((a * 7919 + date.length) % 200) - 100) / 10000}\n`;
    if (!out.write(block)) await new Promise<void>((r) => out.once('drain', () => r()));
  }
  await new Promise<void>((r) => out.end(r));
  return path;
}

beforeAll(async () => {
  server = await new Promise<Server>((done) => {
    const s = ctx.app.listen(0, '127.0.0.1', () => done(s));
  });
  const address = server.address();
  baseUrl = `http://127.0.0.1:${typeof address === 'object' && address ? address.port : 0}`;
});
afterAll(async () => {
  await new Promise((done) => server.close(done));
  await ctx.close();
});

describe('interrupted imports', () => {
  it('the client disconnecting mid-stream: rolled back, nothing stored', async () => {
    const prefix = unique('X').toUpperCase().slice(0, 10);
    const path = await bigFile(prefix, 300, 2000);
    const analyst = demoUser('analyst');
    const token = await signInHttp(baseUrl, analyst.email, analyst.password);
    const ref = randomUUID();
    const upload = streamUpload(baseUrl, token, path, { mode: 'commit', overlap: 'skip' }, ref);
    upload.answer.catch(() => undefined);
    // Once the server is reading and staging the file, cut the connection.
    const seen = await waitFor(async () => {
      const p = await jsonRequest(baseUrl, 'GET', `/api/imports/progress/${ref}`, undefined, token);
      return p.body.phase === 'reading' && p.body.bytesRead > 0 ? p.body : undefined;
    });
    expect(seen.bytesRead).toBeLessThan(seen.totalBytes);
    upload.request().destroy();
    const final = await waitFor(async () => {
      const p = await jsonRequest(baseUrl, 'GET', `/api/imports/progress/${ref}`, undefined, token);
      return p.body.phase === 'failed' || p.body.phase === 'done' ? p.body : undefined;
    });
    expect(final.phase).toBe('failed');
    expect(await storedFor(ctx.knex, prefix)).toEqual({ assets: 0, observations: 0, revisions: 0 });
    expect(await ctx.knex('import_batches').where({ ref }).first()).toBeUndefined();
  });

  it('the server killed with SIGKILL mid-COPY: nothing stored, and the database is not left locked', async () => {
    const prefix = unique('K').toUpperCase().slice(0, 10);
    const path = await bigFile(prefix, 300, 2000);
    const { url, child } = await startServerProcess();
    try {
      const analyst = demoUser('analyst');
      const token = await signInHttp(url, analyst.email, analyst.password);
      const ref = randomUUID();
      const upload = streamUpload(url, token, path, { mode: 'commit', overlap: 'skip' }, ref);
      upload.answer.catch(() => undefined);
      await waitFor(async () => {
        const p = await jsonRequest(url, 'GET', `/api/imports/progress/${ref}`, undefined, token);
        return p.body.phase === 'reading' && p.body.bytesRead > p.body.totalBytes * 0.2 ? p.body : undefined;
      });
      child.kill('SIGKILL');
      await new Promise((done) => child.once('exit', done));
      await expect(upload.answer).rejects.toThrow();
    } finally {
      if (child.exitCode === null && child.signalCode === null) child.kill('SIGKILL');
    }
    expect(await storedFor(ctx.knex, prefix)).toEqual({ assets: 0, observations: 0, revisions: 0 });
    expect(await ctx.knex('import_batches').where('file_name', 'like', `${prefix}%`).first()).toBeUndefined();
    // PostgreSQL ends the killed server's session and its transaction: the dataset lock is free again.
    await waitFor(async () => {
      const locked = await ctx.knex.raw(`SELECT count(*)::int AS n FROM pg_stat_activity WHERE datname = current_database() AND state = 'idle in transaction (aborted)'`);
      return locked.rows[0].n === 0 ? true : undefined;
    }, 10_000, 100);
    await ctx.knex.transaction(async (trx) => {
      await trx.raw('SET LOCAL lock_timeout = 5000');
      await trx.raw('SELECT id FROM datasets WHERE id = 1 FOR UPDATE');
    });
  });
});
