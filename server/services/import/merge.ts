/**
 * From the staging tables into the main tables, inside the import's single transaction:
 * price conversion, overlap checks, new assets, and the merge under the chosen overlap policy (with revisions).
 */
import type pg from 'pg';
import type { Problem } from './parse';

/** The staged observations as (asset_id, d, v, row_no); after convertPrices, the converted returns. */
const RETURNS_SOURCE = 'SELECT m.asset_id, m.created, s.d, s.v, s.row_no FROM import_staging s JOIN import_symbols m USING (sym)';
const PRICES_SOURCE = 'SELECT m.asset_id, m.created, s.d, s.v, s.row_no FROM import_returns s JOIN import_symbols m USING (sym)';

export function sourceQuery(valueKind: string): string {
  return valueKind === 'price' ? PRICES_SOURCE : RETURNS_SOURCE;
}

async function count(connection: pg.ClientBase, sql: string, params: unknown[] = []): Promise<number> {
  const { rows } = await connection.query<{ n: string | number }>(sql, params);
  return Number(rows[0]?.n ?? 0);
}

/**
 * Prices → simple returns per asset over consecutive available dates: r_t = p_t / p_{t−1} − 1.
 * The first price of each asset yields no return. Answers how many first prices there were.
 */
export async function convertPrices(connection: pg.ClientBase): Promise<number> {
  await connection.query(`
    CREATE TEMP TABLE import_returns ON COMMIT DROP AS
      SELECT sym, d, row_no, v / lag(v) OVER (PARTITION BY sym ORDER BY d) - 1 AS v FROM import_staging`);
  const first = await count(connection, 'SELECT count(*) AS n FROM import_returns WHERE v IS NULL');
  await connection.query('DELETE FROM import_returns WHERE v IS NULL; ANALYZE import_returns');
  return first;
}

/** Warnings for |return| above the threshold (prices only: return files are checked while reading). */
export async function largeReturnWarnings(connection: pg.ClientBase, threshold: number, emit: (p: Problem) => void): Promise<void> {
  const { rows } = await connection.query<{ row_no: number; symbol: string; date: string; v: number }>(
    `SELECT s.row_no, m.symbol, (date '1970-01-01' + s.d)::text AS date, s.v
       FROM import_returns s JOIN import_symbols m USING (sym) WHERE abs(s.v) > $1 ORDER BY s.row_no`,
    [threshold],
  );
  for (const r of rows) {
    emit({ severity: 'warning', row: r.row_no, column: r.symbol, code: 'large-return', message: `${r.symbol} on ${r.date}: the price change gives a return of ${(r.v * 100).toFixed(2)} %, above the ${threshold * 100} % threshold` });
  }
}

export interface OverlapCounts {
  fresh: number;
  same: number;
  differ: number;
}

/** How the staged observations meet the stored ones (new, identical, different). */
export async function overlapCounts(connection: pg.ClientBase, source: string): Promise<OverlapCounts> {
  const { rows } = await connection.query<{ fresh: number; same: number; differ: number }>(`
    SELECT count(*) FILTER (WHERE o.asset_id IS NULL)::int AS fresh,
           count(*) FILTER (WHERE o.value = s.v)::int AS same,
           count(*) FILTER (WHERE o.value <> s.v)::int AS differ
      FROM (${source}) s LEFT JOIN return_observations o ON o.asset_id = s.asset_id AND o.date = date '1970-01-01' + s.d`);
  return rows[0];
}

/** Errors for observations already stored (overlap policy 'reject'): the first `limit` of them, and their number. */
export async function overlapProblems(connection: pg.ClientBase, source: string, limit: number, emit: (p: Problem) => void): Promise<number> {
  const total = await count(
    connection,
    `SELECT count(*) AS n FROM (${source}) s JOIN return_observations o ON o.asset_id = s.asset_id AND o.date = date '1970-01-01' + s.d`,
  );
  if (total === 0) return 0;
  const { rows } = await connection.query<{ row_no: number; symbol: string; date: string; old: number; v: number }>(
    `SELECT s.row_no, a.symbol, o.date::text AS date, o.value AS old, s.v
       FROM (${source}) s JOIN return_observations o ON o.asset_id = s.asset_id AND o.date = date '1970-01-01' + s.d
       JOIN assets a ON a.id = s.asset_id ORDER BY s.row_no LIMIT $1`,
    [limit],
  );
  for (const r of rows) {
    emit({ severity: 'error', row: r.row_no, column: r.symbol, code: 'overlap', message: `${r.symbol} on ${r.date} is already stored (${r.old}); the overlap policy is "reject": choose skip or replace to import this file` });
  }
  return total;
}

/** Creates the assets the file names that Loadline does not know yet (name = symbol until metadata is uploaded). */
export async function createNewAssets(connection: pg.ClientBase): Promise<number> {
  const result = await connection.query(`
    INSERT INTO assets (symbol, name) SELECT symbol, symbol FROM import_symbols WHERE asset_id IS NULL ORDER BY symbol
    ON CONFLICT (symbol) DO NOTHING`);
  await connection.query('UPDATE import_symbols s SET asset_id = a.id, created = true FROM assets a WHERE a.symbol = s.symbol AND s.asset_id IS NULL');
  return result.rowCount ?? 0;
}

export interface MergeCounts {
  inserted: number;
  replaced: number;
  unchanged: number;
  skipped: number;
}

/**
 * Merges the staged observations. skip: stored values win; replace: file values win, each change recorded as a
 * revision (old, new); reject: the caller has checked there is no overlap.
 *
 * Plain INSERTs, no ON CONFLICT (speculative insertion costs about twice as much per row): rows of assets created
 * by this import cannot exist yet, and for the others an anti-join leaves out stored dates. The caller holds the
 * dataset lock, so no other import writes these keys meanwhile.
 */
export async function mergeObservations(
  connection: pg.ClientBase,
  source: string,
  policy: 'skip' | 'replace' | 'reject',
  batchId: number,
  total: number,
  /** False when every asset in the file was created by this import: nothing stored can overlap. */
  hasKnownAssets = true,
): Promise<MergeCounts> {
  let replaced = 0;
  if (policy === 'replace' && hasKnownAssets) {
    const revisions = await connection.query(
      `INSERT INTO observation_revisions (batch_id, asset_id, date, old_value, new_value)
       SELECT $1, o.asset_id, o.date, o.value, s.v
         FROM (${source}) s JOIN return_observations o ON o.asset_id = s.asset_id AND o.date = date '1970-01-01' + s.d
        WHERE NOT s.created AND o.value <> s.v`,
      [batchId],
    );
    replaced = revisions.rowCount ?? 0;
    if (replaced > 0) {
      await connection.query(`
        UPDATE return_observations o SET value = s.v FROM (${source}) s
         WHERE NOT s.created AND o.asset_id = s.asset_id AND o.date = date '1970-01-01' + s.d AND o.value <> s.v`);
    }
  }
  const fresh = await connection.query(`INSERT INTO return_observations (asset_id, date, value) SELECT s.asset_id, date '1970-01-01' + s.d, s.v FROM (${source}) s WHERE s.created`);
  const known = hasKnownAssets
    ? await connection.query(`
    INSERT INTO return_observations (asset_id, date, value)
    SELECT s.asset_id, date '1970-01-01' + s.d, s.v FROM (${source}) s
     WHERE NOT s.created AND NOT EXISTS (SELECT 1 FROM return_observations o WHERE o.asset_id = s.asset_id AND o.date = date '1970-01-01' + s.d)`)
    : { rowCount: 0 };
  const inserted = (fresh.rowCount ?? 0) + (known.rowCount ?? 0);
  const existing = total - inserted;
  if (policy === 'replace') return { inserted, replaced, unchanged: existing - replaced, skipped: 0 };
  return { inserted, replaced: 0, unchanged: 0, skipped: existing };
}

/**
 * Which of the file's symbols name no asset stored before this import. Answers the preview's new/known split when
 * the merge path did not run (a file with errors, an unconfirmed re-import): whether an asset is new does not
 * depend on the file's other rows. Assets a streamed commit already created in this transaction count as new.
 */
export async function newSymbolsAmong(connection: pg.ClientBase, symbols: string[]): Promise<string[]> {
  if (!symbols.length) return [];
  const { rows } = await connection.query<{ symbol: string }>(
    `SELECT f.symbol FROM unnest($1::text[]) AS f(symbol)
      WHERE NOT EXISTS (SELECT 1 FROM assets a WHERE a.symbol = f.symbol)
         OR EXISTS (SELECT 1 FROM import_symbols s WHERE s.symbol = f.symbol AND s.created)`,
    [symbols],
  );
  return rows.map((r) => r.symbol);
}

/** True when some of the file's assets were stored before this import (so overlaps are possible). */
export async function hasKnownAssets(connection: pg.ClientBase): Promise<boolean> {
  const { rows } = await connection.query<{ known: boolean }>('SELECT EXISTS (SELECT 1 FROM import_symbols WHERE NOT created) AS known');
  return rows[0].known;
}

/** Marks the assets this batch wrote. */
export async function markAssets(connection: pg.ClientBase, batchId: number): Promise<void> {
  await connection.query('UPDATE assets a SET last_batch_id = $1, updated_at = now() FROM import_symbols s WHERE s.asset_id = a.id', [batchId]);
}
