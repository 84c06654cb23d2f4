/**
 * Staging through COPY: parsed observations stream into a temporary table of the import's own transaction
 * (dropped at commit or rollback), so nothing reaches the main tables before every check has passed.
 */
import { Writable } from 'node:stream';
import type pg from 'pg';
import { from as copyFrom } from 'pg-copy-streams';

/** Creates the import's temp tables on the transaction's connection. */
export async function createStaging(connection: pg.ClientBase): Promise<void> {
  await connection.query(`
    CREATE TEMP TABLE import_staging (row_no integer NOT NULL, sym integer NOT NULL, d integer NOT NULL, v double precision NOT NULL) ON COMMIT DROP;
    CREATE TEMP TABLE import_symbols (sym integer PRIMARY KEY, symbol text NOT NULL, asset_id integer, created boolean NOT NULL DEFAULT false) ON COMMIT DROP;
  `);
}

/** A writable that COPYs tab-separated `row_no sym day value` lines into import_staging. */
export function stagingCopyStream(connection: pg.ClientBase): Writable {
  return connection.query(copyFrom('COPY import_staging (row_no, sym, d, v) FROM STDIN')) as unknown as Writable;
}

/** Adds symbols (local numbers → text) to import_symbols and looks up the ones already stored. */
export async function addSymbols(connection: pg.ClientBase, indexes: number[], names: string[]): Promise<void> {
  if (!indexes.length) return;
  await connection.query('INSERT INTO import_symbols (sym, symbol) SELECT * FROM unnest($1::int[], $2::text[])', [indexes, names]);
  await connection.query('UPDATE import_symbols s SET asset_id = a.id FROM assets a WHERE a.symbol = s.symbol AND s.asset_id IS NULL AND s.sym = ANY($1::int[])', [indexes]);
}

/** Stores the file's symbols (local numbers → text) beside the staged rows. */
export async function stageSymbols(connection: pg.ClientBase, symbols: string[], used: (index: number) => boolean): Promise<void> {
  const indexes: number[] = [];
  const names: string[] = [];
  symbols.forEach((symbol, index) => {
    if (used(index)) {
      indexes.push(index);
      names.push(symbol);
    }
  });
  await connection.query('INSERT INTO import_symbols (sym, symbol) SELECT * FROM unnest($1::int[], $2::text[])', [indexes, names]);
  await connection.query('UPDATE import_symbols s SET asset_id = a.id FROM assets a WHERE a.symbol = s.symbol');
  await connection.query('ANALYZE import_staging; ANALYZE import_symbols');
}
