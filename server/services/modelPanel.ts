/**
 * Reads the returns panel a model run asks for (universe × window) from PostgreSQL into the engine's layout
 * (T × N row-major Float64Array, NaN = missing) and applies the run's missing-data policy.
 */
import type { Knex } from 'knex';
import type pg from 'pg';
import { to as copyTo } from 'pg-copy-streams';
import { unprocessable } from '../http/errors';
import type { EstimationWindow, MissingPolicy, Universe } from '../../shared/schemas/modelRuns';
import { MIN_OBSERVATIONS_PER_ASSET } from '../../shared/schemas/modelRuns';
import { assetListMembers } from './assetListsService';

export interface UniverseAsset {
  id: number;
  symbol: string;
}

export interface LoadedPanel {
  values: Float64Array; // T × N
  observations: number;
  assets: number;
  assetIds: number[];
  symbols: string[];
  dates: string[];
  periodsPerYear: number;
  /** Share of missing cells in the panel as fitted. */
  missingShare: number;
  droppedAssets: string[];
  droppedDates: number;
}

/** The assets a universe names, ordered by symbol. Unknown symbols, sectors or lists are a 422 naming them. */
export async function resolveUniverse(db: Knex | Knex.Transaction, universe: Universe): Promise<UniverseAsset[]> {
  if (universe.kind === 'all') {
    return db('assets').select('id', 'symbol').whereExists(db('return_observations').select(db.raw('1')).whereRaw('return_observations.asset_id = assets.id')).orderBy('symbol');
  }
  if (universe.kind === 'sectors') {
    const rows: (UniverseAsset & { sector: string })[] = await db('assets').select('id', 'symbol', 'sector').whereIn('sector', universe.sectors).orderBy('symbol');
    const missing = universe.sectors.filter((s) => !rows.some((r) => r.sector === s));
    if (missing.length) throw unprocessable(`No assets in sector ${missing.map((s) => `"${s}"`).join(', ')}`, missing.map((s) => ({ path: 'universe.sectors', message: `no assets in sector "${s}"` })));
    return rows.map(({ id, symbol }) => ({ id, symbol }));
  }
  if (universe.kind === 'list') {
    const members = await assetListMembers(db, universe.listId);
    if (!members) throw unprocessable(`No saved asset list ${universe.listId}`, [{ path: 'universe.listId', message: `no saved asset list ${universe.listId}` }]);
    return members;
  }
  const wanted = [...new Set(universe.symbols.map((s) => s.trim()))];
  const rows: UniverseAsset[] = await db('assets').select('id', 'symbol').whereIn('symbol', wanted).orderBy('symbol');
  const unknown = wanted.filter((s) => !rows.some((r) => r.symbol === s));
  if (unknown.length) {
    throw unprocessable(`Unknown symbol${unknown.length > 1 ? 's' : ''}: ${unknown.slice(0, 20).join(', ')}${unknown.length > 20 ? ' …' : ''}`, unknown.slice(0, 100).map((s) => ({ path: 'universe.symbols', message: `unknown symbol ${s}` })));
  }
  return rows;
}

/** The window's dates (ascending), taken over the dates any of the universe's assets is observed. */
export async function windowDates(db: Knex | Knex.Transaction, assetIds: number[], window: EstimationWindow): Promise<string[]> {
  if (window.kind === 'dates') {
    const rows = await db.raw(`SELECT DISTINCT date::text AS d FROM return_observations WHERE asset_id = ANY(?) AND date BETWEEN ? AND ? ORDER BY 1`, [assetIds, window.from, window.to]);
    return rows.rows.map((r: { d: string }) => r.d);
  }
  // Walks the (date, asset_id) index backwards one distinct date at a time (a "loose index scan"): N short index
  // probes instead of a DISTINCT over every observation of the universe.
  const rows = await db.raw(
    `WITH RECURSIVE d(date, k) AS (
       (SELECT date, 1 FROM return_observations WHERE asset_id = ANY(:ids) ORDER BY date DESC LIMIT 1)
       UNION ALL
       SELECT (SELECT o.date FROM return_observations o WHERE o.date < d.date AND o.asset_id = ANY(:ids) ORDER BY o.date DESC LIMIT 1), k + 1
       FROM d WHERE k < :n AND d.date IS NOT NULL)
     SELECT date::text AS d FROM d WHERE date IS NOT NULL ORDER BY 1`,
    { ids: assetIds, n: window.observations },
  );
  return rows.rows.map((r: { d: string }) => r.d);
}

/** Observations per asset inside [first, last]. */
export async function observationCounts(db: Knex | Knex.Transaction, assetIds: number[], first: string, last: string): Promise<Map<number, number>> {
  const rows = await db.raw(`SELECT asset_id, count(*)::int AS n FROM return_observations WHERE asset_id = ANY(?) AND date BETWEEN ? AND ? GROUP BY asset_id`, [assetIds, first, last]);
  return new Map(rows.rows.map((r: { asset_id: number; n: number }) => [r.asset_id, r.n]));
}

/** Annualisation from the dataset's frequency (252 daily, 52 weekly, 12 monthly: common practice); else from the dates' spacing. */
export async function periodsPerYear(db: Knex | Knex.Transaction, dates: string[]): Promise<number> {
  const dataset = await db('datasets').select('frequency').where({ id: 1 }).first().catch(() => null);
  const byName: Record<string, number> = { daily: 252, weekly: 52, monthly: 12 };
  if (dataset?.frequency && byName[dataset.frequency]) return byName[dataset.frequency];
  if (dates.length < 2) return 252;
  const gaps: number[] = [];
  for (let k = 1; k < dates.length; k++) gaps.push((Date.parse(dates[k]) - Date.parse(dates[k - 1])) / 86400000);
  gaps.sort((a, b) => a - b);
  const median = gaps[Math.floor(gaps.length / 2)];
  return median <= 4 ? 252 : median <= 10 ? 52 : 12;
}

/**
 * Loads the panel: the observations stream out of PostgreSQL by COPY … TO STDOUT in binary format and are decoded
 * straight into the T × N array (several times faster than one JS object per observation, and no large text).
 */
export async function loadPanel(db: Knex | Knex.Transaction, universe: Universe, window: EstimationWindow, missing: MissingPolicy): Promise<LoadedPanel> {
  const assets = await resolveUniverse(db, universe);
  if (assets.length < 2) throw unprocessable(`The universe holds ${assets.length} asset${assets.length === 1 ? '' : 's'} with data; a model needs at least 2`, [{ path: 'universe', message: 'fewer than 2 assets with data' }]);
  const ids = assets.map((a) => a.id);
  let dates = await windowDates(db, ids, window);
  if (dates.length === 0) throw unprocessable('The window holds no observations for these assets', [{ path: 'window', message: 'no observations in the window' }]);
  const first = dates[0];
  const last = dates[dates.length - 1];
  const t0 = dates.length;
  const n0 = assets.length;
  const full = new Float64Array(t0 * n0).fill(NaN);
  // Day offsets from the first date index the rows (no join: robust to stale planner statistics after a big import).
  const firstMs = Date.parse(first);
  const days = dates.map((d) => Math.round((Date.parse(d) - firstMs) / 86400000));
  const rowOfDay = new Int32Array(days[days.length - 1] + 1).fill(-1);
  days.forEach((day, r) => (rowOfDay[day] = r));
  const minId = ids.reduce((m, id) => Math.min(m, id), Infinity);
  const columnOfId = new Int32Array(ids.reduce((m, id) => Math.max(m, id), -Infinity) - minId + 1).fill(-1);
  ids.forEach((id, i) => (columnOfId[id - minId] = i));
  const buf = await copyObservations(db, ids, first, last);
  // COPY binary layout (PostgreSQL docs, "COPY … Binary Format"): 19-byte header + extension, then per row
  // int16 field count and, per field, int32 length + big-endian value; a field count of −1 ends the data.
  let off = 19 + buf.readInt32BE(15);
  for (;;) {
    const fields = buf.readInt16BE(off);
    off += 2;
    if (fields === -1) break;
    const assetId = buf.readInt32BE(off + 4);
    const day = buf.readInt32BE(off + 12);
    const value = buf.readDoubleBE(off + 20);
    off += 28;
    const i = assetId - minId >= 0 && assetId - minId < columnOfId.length ? columnOfId[assetId - minId] : -1;
    const r = day >= 0 && day < rowOfDay.length ? rowOfDay[day] : -1;
    if (i >= 0 && r >= 0) full[r * n0 + i] = value;
  }

  // Per-asset minimum, stated in the form and the API: too short a history cannot be estimated.
  const counts = new Int32Array(n0);
  for (let r = 0; r < t0; r++) for (let i = 0; i < n0; i++) if (!Number.isNaN(full[r * n0 + i])) counts[i]++;
  let keepAssets = assets.map((_, i) => i);
  const droppedAssets: string[] = [];
  if (missing === 'drop-assets') {
    keepAssets = keepAssets.filter((i) => counts[i] === t0);
    for (let i = 0; i < n0; i++) if (counts[i] !== t0) droppedAssets.push(assets[i].symbol);
  }
  const short = keepAssets.filter((i) => counts[i] < MIN_OBSERVATIONS_PER_ASSET);
  if (short.length) {
    const list = short.slice(0, 10).map((i) => `${assets[i].symbol} (${counts[i]})`).join(', ');
    throw unprocessable(
      `Too few observations: every asset needs at least ${MIN_OBSERVATIONS_PER_ASSET} in the window ${first} … ${last}; ${short.length} asset${short.length > 1 ? 's have' : ' has'} fewer: ${list}${short.length > 10 ? ' …' : ''}`,
      short.slice(0, 100).map((i) => ({ path: 'window', message: `${assets[i].symbol} has ${counts[i]} observations in the window` })),
    );
  }
  let keepRows = dates.map((_, r) => r);
  if (missing === 'complete-rows') keepRows = keepRows.filter((r) => keepAssets.every((i) => !Number.isNaN(full[r * n0 + i])));
  if (keepRows.length < MIN_OBSERVATIONS_PER_ASSET) {
    throw unprocessable(`Too few observations: ${keepRows.length} dates remain after the missing-data policy "${missing}"; at least ${MIN_OBSERVATIONS_PER_ASSET} are needed`, [{ path: 'missing', message: `${keepRows.length} complete dates` }]);
  }
  if (keepAssets.length < 2) throw unprocessable(`Only ${keepAssets.length} asset(s) remain after the missing-data policy "${missing}"; a model needs at least 2`, [{ path: 'missing', message: 'fewer than 2 assets remain' }]);

  const n = keepAssets.length;
  const t = keepRows.length;
  let values = full;
  if (n !== n0 || t !== t0) {
    values = new Float64Array(t * n);
    for (let r = 0; r < t; r++) for (let j = 0; j < n; j++) values[r * n + j] = full[keepRows[r] * n0 + keepAssets[j]];
    dates = keepRows.map((r) => dates[r]);
  }
  let missingCells = 0;
  for (let k = 0; k < values.length; k++) if (Number.isNaN(values[k])) missingCells++;
  return {
    values,
    observations: t,
    assets: n,
    assetIds: keepAssets.map((i) => assets[i].id),
    symbols: keepAssets.map((i) => assets[i].symbol),
    dates,
    periodsPerYear: await periodsPerYear(db, dates),
    missingShare: missingCells / values.length,
    droppedAssets,
    droppedDates: t0 - t,
  };
}

/** (asset_id, day offset from `first`, value) rows of the window in COPY binary format, on the caller's connection. */
async function copyObservations(db: Knex | Knex.Transaction, ids: number[], first: string, last: string): Promise<Buffer> {
  if (!ids.every(Number.isInteger) || !/^\d{4}-\d{2}-\d{2}$/.test(first) || !/^\d{4}-\d{2}-\d{2}$/.test(last)) throw new Error('copyObservations: bad arguments');
  const sql = `COPY (SELECT asset_id, date - '${first}'::date, value FROM return_observations WHERE asset_id = ANY('{${ids.join(',')}}'::int[]) AND date BETWEEN '${first}' AND '${last}') TO STDOUT (FORMAT binary)`;
  // A transaction's client hands out the transaction's own connection (and its release is a no-op).
  const client = (db as unknown as { client: { acquireConnection(): Promise<pg.PoolClient>; releaseConnection(c: pg.PoolClient): Promise<void> } }).client;
  const connection = await client.acquireConnection();
  try {
    const chunks: Buffer[] = [];
    for await (const chunk of connection.query(copyTo(sql))) chunks.push(chunk as Buffer);
    return Buffer.concat(chunks);
  } finally {
    await client.releaseConnection(connection);
  }
}
