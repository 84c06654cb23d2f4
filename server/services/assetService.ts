/** Assets: listing, metadata edits (audited) and the asset metadata CSV upload. */
import { createReadStream } from 'node:fs';
import { createHash, randomUUID } from 'node:crypto';
import { parse } from 'csv-parse';
import { Model } from 'objection';
import type { Knex } from 'knex';
import type { Asset as AssetDto, AssetPatch } from '../../shared/schemas/assets';
import { Asset } from '../models/Asset';
import { notFound, unprocessable } from '../http/errors';
import { recordAudit } from './auditService';
import { DELIMITER_CHAR, detectDelimiter, readHead, validSymbol } from './import/parse';

function toDto(asset: Asset): AssetDto {
  return {
    id: asset.id,
    symbol: asset.symbol,
    name: asset.name,
    sector: asset.sector,
    country: asset.country,
    currency: asset.currency,
    assetClass: asset.asset_class,
    lastBatchId: asset.last_batch_id,
  };
}

export async function listAssets(): Promise<{ assets: AssetDto[] }> {
  const rows = await Asset.query().orderBy('symbol');
  return { assets: rows.map(toDto) };
}

export async function getAsset(id: number): Promise<AssetDto> {
  const asset = await Asset.query().findById(id);
  if (!asset) throw notFound(`Asset ${id} does not exist`);
  return toDto(asset);
}

export async function updateAsset(id: number, patch: AssetPatch, actor: { id: number; email: string }, ip: string | null): Promise<AssetDto> {
  return Model.knex().transaction(async (trx) => {
    const asset = await Asset.query(trx).findById(id).forUpdate();
    if (!asset) throw notFound(`Asset ${id} does not exist`);
    const changes: Record<string, unknown> = {};
    if (patch.name !== undefined) changes.name = patch.name;
    if (patch.sector !== undefined) changes.sector = patch.sector || null;
    if (patch.country !== undefined) changes.country = patch.country;
    if (patch.currency !== undefined) changes.currency = patch.currency;
    if (patch.assetClass !== undefined) changes.asset_class = patch.assetClass || null;
    const before = toDto(asset);
    const updated = await Asset.query(trx).patchAndFetchById(id, { ...changes, updated_at: new Date() } as Partial<Asset>);
    await recordAudit({ actor, action: 'asset.updated', objectType: 'asset', objectId: id, ip, details: { symbol: asset.symbol, before, changes } }, trx);
    return toDto(updated);
  });
}

export async function returnSeries(symbol: string, query: { from?: string; to?: string; kind: 'simple' | 'log' }) {
  const knex = Model.knex();
  const asset = await Asset.query().where({ symbol: symbol.toUpperCase() }).first();
  if (!asset) throw notFound(`No asset with symbol ${symbol}`);
  const dataset = await knex('datasets').where({ id: 1 }).first('frequency');
  const q = knex('return_observations').where({ asset_id: asset.id }).orderBy('date').select('date', 'value');
  if (query.from) q.where('date', '>=', query.from);
  if (query.to) q.where('date', '<=', query.to);
  const rows = (await q) as { date: string; value: number }[];
  return {
    symbol: asset.symbol,
    kind: query.kind,
    frequency: dataset?.frequency ?? null,
    // ln(1 + r) with log1p keeps precision for small returns.
    observations: rows.map((r) => ({ date: r.date, value: query.kind === 'log' ? Math.log1p(r.value) : r.value })),
  };
}

const METADATA_COLUMNS = ['symbol', 'name', 'sector', 'country', 'currency', 'asset_class'] as const;
type MetadataColumn = (typeof METADATA_COLUMNS)[number];

/**
 * Asset metadata CSV (header: symbol plus any of name, sector, country, currency, asset_class): creates unknown
 * symbols and updates the given fields of known ones, all or nothing, with every problem named by row and column.
 */
export async function importAssetMetadata(
  file: { path: string; originalname: string; size: number },
  actor: { id: number; email: string },
  ip: string | null,
): Promise<{ batchId: number; rowsRead: number; created: number; updated: number }> {
  const head = await readHead(file.path);
  const delimiter = detectDelimiter(head) ?? 'comma';
  const issues: { path: string; message: string }[] = [];
  const rows: Record<string, string | null>[] = [];
  const seen = new Map<string, number>();
  let columns: (MetadataColumn | null)[] = [];
  let line = 0;
  const hash = createHash('sha256');
  const stream = createReadStream(file.path);
  stream.on('data', (piece) => hash.update(piece as Buffer));
  try {
    for await (const record of stream.pipe(parse({ delimiter: DELIMITER_CHAR[delimiter], bom: true, relax_column_count: true, skip_empty_lines: false })) as AsyncIterable<string[]>) {
      line++;
      if (line === 1) {
        columns = record.map((h) => {
          const name = h.trim().toLowerCase().replace(/[\s-]+/g, '_') as MetadataColumn;
          return (METADATA_COLUMNS as readonly string[]).includes(name) ? name : null;
        });
        const named = columns.filter(Boolean) as string[];
        const duplicated = named.filter((c, i) => named.indexOf(c) !== i);
        if (duplicated.length) issues.push({ path: 'row 1', message: `Header column "${duplicated[0]}" appears twice` });
        if (!columns.includes('symbol')) issues.push({ path: 'row 1, column symbol', message: 'The header needs a "symbol" column' });
        if (issues.length) break;
        continue;
      }
      if (record.length === 1 && record[0].trim() === '') continue;
      if (record.length !== columns.length) {
        issues.push({ path: `row ${line}`, message: `Row ${line} has ${record.length} fields; the header has ${columns.length}` });
        continue;
      }
      const row: Record<string, string | null> = {};
      columns.forEach((column, i) => {
        if (column) row[column] = record[i].trim() === '' ? null : record[i].trim();
      });
      const symbol = (row.symbol ?? '').toUpperCase();
      if (!validSymbol(symbol)) issues.push({ path: `row ${line}, column symbol`, message: `"${symbol.slice(0, 40)}" is not a usable symbol` });
      else if (seen.has(symbol)) issues.push({ path: `row ${line}, column symbol`, message: `${symbol} already appears in row ${seen.get(symbol)}` });
      else seen.set(symbol, line);
      if (row.currency && !/^[A-Z]{3}$/.test(row.currency)) issues.push({ path: `row ${line}, column currency`, message: `"${row.currency}" is not a three-letter currency code` });
      if (row.country && !/^[A-Z]{2}$/.test(row.country)) issues.push({ path: `row ${line}, column country`, message: `"${row.country}" is not a two-letter country code` });
      if (row.name && row.name.length > 200) issues.push({ path: `row ${line}, column name`, message: 'The name is longer than 200 characters' });
      row.symbol = symbol;
      rows.push(row);
      if (rows.length > 100_000) {
        issues.push({ path: `row ${line}`, message: 'An asset metadata file holds at most 100,000 assets' });
        break;
      }
    }
  } catch (error) {
    if (!String((error as { code?: string }).code ?? '').startsWith('CSV_')) throw error;
    issues.push({ path: `row ${(error as { lines?: number }).lines ?? '?'}`, message: `The file is not well-formed CSV: ${(error as Error).message}` });
  }
  if (line === 0) issues.push({ path: '(file)', message: 'The file is empty' });
  else if (!issues.length && rows.length === 0) issues.push({ path: '(file)', message: 'The file has a header but no rows' });
  if (issues.length) throw unprocessable(`The asset metadata file has ${issues.length} problem${issues.length === 1 ? '' : 's'}; nothing was stored`, issues.slice(0, 100));

  return Model.knex().transaction(async (trx) => {
    // Two set-based statements (not one per row): update the known symbols, then insert the new ones.
    const given = METADATA_COLUMNS.filter((c) => c !== 'symbol' && columns.includes(c));
    const arrays: (string | null)[][] = [rows.map((r) => r.symbol), ...given.map((c) => rows.map((r) => r[c] ?? null))];
    // Column names come from the fixed list above, values only through bindings.
    const unnest = `unnest(${arrays.map(() => '?::text[]').join(', ')}) AS u(symbol${given.map((c) => `, ${c}`).join('')})`;
    // A name left empty keeps the stored name; other empty fields clear theirs.
    const sets = given.map((c) => (c === 'name' ? 'name = coalesce(u.name, a.name)' : `${c} = u.${c}`));
    const updatedResult = await trx.raw(
      `UPDATE assets a SET ${[...sets, 'updated_at = now()'].join(', ')} FROM ${unnest} WHERE a.symbol = u.symbol`,
      arrays as unknown as Knex.RawBinding[],
    );
    const createdResult = await trx.raw(
      `INSERT INTO assets (symbol, name${given.filter((c) => c !== 'name').map((c) => `, ${c}`).join('')})
       SELECT u.symbol, coalesce(${given.includes('name') ? 'u.name' : 'NULL'}, u.symbol)${given.filter((c) => c !== 'name').map((c) => `, u.${c}`).join('')}
         FROM ${unnest} WHERE NOT EXISTS (SELECT 1 FROM assets a WHERE a.symbol = u.symbol)`,
      arrays as unknown as Knex.RawBinding[],
    );
    const updated = updatedResult.rowCount ?? 0;
    const created = createdResult.rowCount ?? 0;
    const [batch] = await trx('import_batches')
      .insert({
        ref: randomUUID(), user_id: actor.id, user_email: actor.email, kind: 'asset-metadata', file_name: file.originalname.slice(0, 255), file_size: file.size,
        sha256: hash.digest('hex'), status: 'committed', rows_read: rows.length, inserted: created, replaced: updated, committed_at: trx.fn.now(),
      })
      .returning('id');
    await recordAudit({ actor, action: 'assets.metadata-imported', objectType: 'import_batch', objectId: batch.id, ip, details: { file: file.originalname, created, updated } }, trx);
    return { batchId: batch.id as number, rowsRead: rows.length, created, updated };
  });
}
