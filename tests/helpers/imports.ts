import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { basename, join } from 'node:path';
import type { Knex } from 'knex';
import request from 'supertest';

export const FIXTURES = join(import.meta.dirname, '..', 'fixtures', 'imports');
const scratch = mkdtempSync(join(tmpdir(), 'loadline-import-test-'));

/**
 * A copy of a fixture whose symbols (all starting with "QF") get a prefix unique to this run, so exact
 * counts hold whatever else the shared test database holds.
 */
export function fixtureCopy(name: string, prefix: string): string {
  const text = readFileSync(join(FIXTURES, name), 'utf8').replace(/QF/g, prefix);
  const path = join(scratch, `${prefix}-${basename(name)}`);
  writeFileSync(path, text);
  return path;
}

/** A multipart upload to POST /api/imports. */
export function upload(app: unknown, token: string, path: string, fields: Record<string, string | boolean | number> = {}, ref?: string) {
  let req = request(app as never)
    .post(`/api/imports${ref ? `?ref=${ref}` : ''}`)
    .set('Authorization', `Bearer ${token}`);
  for (const [key, value] of Object.entries(fields)) req = req.field(key, String(value));
  return req.attach('file', path);
}

/** What the main tables hold for symbols starting with a prefix. */
export async function storedFor(knex: Knex, prefix: string) {
  const like = `${prefix}%`;
  const assets = await knex('assets').where('symbol', 'like', like).count<{ n: number }[]>({ n: '*' }).first();
  const observations = await knex('return_observations as o').join('assets as a', 'a.id', 'o.asset_id').where('a.symbol', 'like', like).count<{ n: number }[]>({ n: '*' }).first();
  const revisions = await knex('observation_revisions as r').join('assets as a', 'a.id', 'r.asset_id').where('a.symbol', 'like', like).count<{ n: number }[]>({ n: '*' }).first();
  return { assets: Number(assets?.n), observations: Number(observations?.n), revisions: Number(revisions?.n) };
}

export async function seriesOf(knex: Knex, symbol: string): Promise<{ date: string; value: number }[]> {
  return knex('return_observations as o').join('assets as a', 'a.id', 'o.asset_id').where('a.symbol', symbol).orderBy('o.date').select('o.date', 'o.value');
}
