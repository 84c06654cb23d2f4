/**
 * Portfolios and holdings: access, CRUD, holdings replacement with validation, CSV upload.
 *
 * Access (decided here, documented in the API description):
 *  - a PM reads and edits only the portfolios they own; another PM's fund answers 404 (its existence is not
 *    revealed). Benchmark portfolios (kind 'benchmark') are shared reference portfolios: every role may read them and
 *    choose them as a benchmark; only their owner or an admin edits them (others get 403).
 *  - analysts and compliance read every portfolio and edit none (403); admins read and edit all.
 * Every change is audited in the same transaction as the change.
 */
import type { Knex } from 'knex';
import { parse } from 'csv-parse/sync';
import type { AuthenticatedUser } from '../auth/access';
import { badRequest, conflict, forbidden, notFound, unprocessable } from '../http/errors';
import { Portfolio } from '../models/Portfolio';
import { PortfolioHolding } from '../models/PortfolioHolding';
import { recordAudit } from './auditService';
import {
  WEIGHT_SUM_TOLERANCE,
  type CreatePortfolioBody,
  type HoldingInput,
  type PortfolioDetail,
  type PortfolioSummary,
  type UpdatePortfolioBody,
} from '../../shared/schemas/portfolios';

type Issue = { path: string; message: string };
type Actor = Pick<AuthenticatedUser, 'id' | 'email' | 'role'>;

export interface PortfolioRow {
  id: number;
  name: string;
  kind: 'fund' | 'benchmark';
  description: string;
  base_currency: string;
  owner_id: number;
  owner_name: string;
  owner_email: string;
  benchmark_portfolio_id: number | null;
  benchmark_name: string | null;
  input_mode: 'weights' | 'market-values';
  holdings_count: number;
  version: number;
  created_at: Date;
  updated_at: Date;
}

function db(trx?: Knex.Transaction): Knex {
  return trx ?? (Portfolio.knex() as Knex);
}

function summaryQuery(k: Knex) {
  return k('portfolios as p')
    .join('users as u', 'u.id', 'p.owner_id')
    .leftJoin('portfolios as b', 'b.id', 'p.benchmark_portfolio_id')
    .select(
      'p.id',
      'p.name',
      'p.kind',
      'p.description',
      'p.base_currency',
      'p.owner_id',
      'u.name as owner_name',
      'u.email as owner_email',
      'p.benchmark_portfolio_id',
      'b.name as benchmark_name',
      'p.input_mode',
      'p.created_at',
      'p.updated_at',
      k.raw('(SELECT count(*)::int FROM portfolio_holdings h WHERE h.portfolio_id = p.id) AS holdings_count'),
      // Microseconds since the epoch of the last change: keys per-process caches of holdings.
      k.raw('(extract(epoch FROM p.updated_at) * 1000000)::bigint AS version'),
    );
}

/** Where the caller may read: PMs their own portfolios and every benchmark; other roles everything. */
function scopeForReader(q: Knex.QueryBuilder, user: Actor): Knex.QueryBuilder {
  if (user.role === 'pm') q.where((w) => w.where('p.owner_id', user.id).orWhere('p.kind', 'benchmark'));
  return q;
}

export function canEdit(user: Actor, row: { owner_id: number }): boolean {
  return user.role === 'admin' || (user.role === 'pm' && row.owner_id === user.id);
}

function toSummary(row: PortfolioRow, user: Actor): PortfolioSummary {
  // The benchmark's name is shown only when the caller may read that benchmark.
  return {
    id: row.id,
    name: row.name,
    kind: row.kind,
    description: row.description,
    baseCurrency: row.base_currency.trim(),
    owner: { id: row.owner_id, name: row.owner_name, email: row.owner_email },
    benchmark: row.benchmark_portfolio_id ? { id: row.benchmark_portfolio_id, name: row.benchmark_name ?? '' } : null,
    holdingsCount: row.holdings_count,
    inputMode: row.input_mode,
    canEdit: canEdit(user, row),
    createdAt: new Date(row.created_at).toISOString(),
    updatedAt: new Date(row.updated_at).toISOString(),
  };
}

export async function listPortfolios(user: Actor): Promise<PortfolioSummary[]> {
  const rows = (await scopeForReader(summaryQuery(db()), user).orderBy([{ column: 'p.kind', order: 'desc' }, { column: 'p.name' }])) as PortfolioRow[];
  return rows.map((r) => toSummary(r, user));
}

/** The portfolio row if the caller may read it; 404 otherwise (another PM's fund is not revealed). */
export async function readablePortfolio(user: Actor, id: number, trx?: Knex.Transaction): Promise<PortfolioRow> {
  const row = (await scopeForReader(summaryQuery(db(trx)), user).where('p.id', id).first()) as PortfolioRow | undefined;
  if (!row) throw notFound(`Portfolio ${id} does not exist or is not yours to see`);
  return row;
}

async function editablePortfolio(user: Actor, id: number, trx: Knex.Transaction): Promise<PortfolioRow> {
  const row = await readablePortfolio(user, id, trx);
  if (!canEdit(user, row)) throw forbidden('Only the portfolio’s owner or an administrator may change it');
  // Serialise concurrent edits of one portfolio.
  await trx('portfolios').where({ id }).forUpdate().first();
  return row;
}

export interface HoldingRow {
  asset_id: number;
  symbol: string;
  asset_name: string | null;
  weight: number;
  market_value: number | null;
}

export async function holdingsOf(portfolioId: number, trx?: Knex.Transaction): Promise<HoldingRow[]> {
  return (await db(trx)('portfolio_holdings as h')
    .join('assets as a', 'a.id', 'h.asset_id')
    .where('h.portfolio_id', portfolioId)
    .orderBy('h.position')
    .select('h.asset_id', 'a.symbol', 'a.name as asset_name', 'h.weight', 'h.market_value')) as HoldingRow[];
}

export async function getPortfolio(user: Actor, id: number, trx?: Knex.Transaction): Promise<PortfolioDetail> {
  const row = await readablePortfolio(user, id, trx);
  const holdings = await holdingsOf(id, trx);
  const withValues = holdings.filter((h) => h.market_value !== null);
  return {
    ...toSummary(row, user),
    holdings: holdings.map((h) => ({ symbol: h.symbol, assetName: h.asset_name, weight: h.weight, marketValue: h.market_value })),
    totalMarketValue: withValues.length && withValues.length === holdings.length ? withValues.reduce((s, h) => s + (h.market_value ?? 0), 0) : null,
  };
}

/** A benchmark must be readable by the caller and must not be the portfolio itself. */
async function checkBenchmark(user: Actor, benchmarkId: number | null | undefined, selfId: number | null, trx: Knex.Transaction): Promise<void> {
  if (benchmarkId === null || benchmarkId === undefined) return;
  if (benchmarkId === selfId) throw unprocessable('A portfolio cannot be its own benchmark', [{ path: 'benchmarkPortfolioId', message: 'choose another portfolio' }]);
  const row = (await scopeForReader(summaryQuery(trx), user).where('p.id', benchmarkId).first()) as PortfolioRow | undefined;
  if (!row) throw unprocessable('The benchmark portfolio does not exist or is not visible to you', [{ path: 'benchmarkPortfolioId', message: `no portfolio ${benchmarkId} you can read` }]);
}

async function ownerFor(user: Actor, ownerId: number | undefined, trx: Knex.Transaction): Promise<number> {
  if (ownerId === undefined || ownerId === user.id) return user.id;
  if (user.role !== 'admin') throw forbidden('Only an administrator may create a portfolio for someone else');
  const owner = await trx('users').where({ id: ownerId, active: true }).first();
  if (!owner) throw unprocessable('The owner does not exist', [{ path: 'ownerId', message: `no active user ${ownerId}` }]);
  if (owner.role !== 'pm') throw unprocessable('Portfolios are owned by portfolio managers', [{ path: 'ownerId', message: `${owner.email} is not a portfolio manager` }]);
  return ownerId;
}

function isUniqueViolation(error: unknown): boolean {
  return (error as { code?: string }).code === '23505';
}

export async function createPortfolio(user: Actor, body: Required<Omit<CreatePortfolioBody, 'ownerId'>> & { ownerId?: number }, ip: string | null): Promise<PortfolioDetail> {
  const k = db();
  try {
    return await k.transaction(async (trx) => {
      const ownerId = await ownerFor(user, body.ownerId, trx);
      await checkBenchmark(user, body.benchmarkPortfolioId, null, trx);
      const [row] = await trx('portfolios')
        .insert({
          name: body.name,
          kind: body.kind,
          description: body.description,
          base_currency: body.baseCurrency,
          owner_id: ownerId,
          benchmark_portfolio_id: body.benchmarkPortfolioId,
        })
        .returning('id');
      await recordAudit({ actor: user, action: 'portfolio.created', objectType: 'portfolio', objectId: row.id, ip, details: { name: body.name, kind: body.kind, ownerId } }, trx);
      return getPortfolio(user, row.id, trx);
    });
  } catch (error) {
    if (isUniqueViolation(error)) throw conflict(`The owner already has a portfolio named '${body.name}'`, [{ path: 'name', message: 'choose another name' }]);
    throw error;
  }
}

export async function updatePortfolio(user: Actor, id: number, body: UpdatePortfolioBody & { baseCurrency?: string }, ip: string | null): Promise<PortfolioDetail> {
  const k = db();
  try {
    return await k.transaction(async (trx) => {
      const before = await editablePortfolio(user, id, trx);
      if (body.benchmarkPortfolioId !== undefined) await checkBenchmark(user, body.benchmarkPortfolioId, id, trx);
      const patch: Record<string, unknown> = {};
      if (body.name !== undefined) patch.name = body.name;
      if (body.kind !== undefined) patch.kind = body.kind;
      if (body.description !== undefined) patch.description = body.description;
      if (body.baseCurrency !== undefined) patch.base_currency = body.baseCurrency;
      if (body.benchmarkPortfolioId !== undefined) patch.benchmark_portfolio_id = body.benchmarkPortfolioId;
      if (Object.keys(patch).length) {
        await trx('portfolios').where({ id }).update({ ...patch, updated_at: trx.fn.now() });
        const changes = Object.fromEntries(
          Object.entries(patch).map(([key, value]) => [key, { from: (before as unknown as Record<string, unknown>)[key] ?? null, to: value }]),
        );
        await recordAudit({ actor: user, action: 'portfolio.updated', objectType: 'portfolio', objectId: id, ip, details: { changes } }, trx);
      }
      return getPortfolio(user, id, trx);
    });
  } catch (error) {
    if (isUniqueViolation(error)) throw conflict(`The owner already has a portfolio named '${body.name}'`, [{ path: 'name', message: 'choose another name' }]);
    throw error;
  }
}

export async function deletePortfolio(user: Actor, id: number, ip: string | null): Promise<void> {
  await db().transaction(async (trx) => {
    const row = await editablePortfolio(user, id, trx);
    const holdings = await trx('portfolio_holdings').where({ portfolio_id: id }).count<{ count: number }[]>({ count: '*' }).first();
    await trx('portfolios').where({ id }).delete();
    await recordAudit({ actor: user, action: 'portfolio.deleted', objectType: 'portfolio', objectId: id, ip, details: { name: row.name, holdings: Number(holdings?.count ?? 0) } }, trx);
  });
}

// ---------------------------------------------------------------------------------------------------------------
// Holdings validation

export interface ValidatedHolding {
  assetId: number;
  symbol: string;
  weight: number; // normalised
  marketValue: number | null;
}

export interface HoldingsInput {
  mode: 'weights' | 'market-values';
  weightUnit: 'fraction' | 'percent';
  holdings: HoldingInput[];
}

/**
 * Checks every row and answers normalised weights, or throws 422 with one issue per offending row.
 * `rowLabel(i)` names row i in messages ('row 3' for the grid, 'line 4' for a CSV file).
 */
export async function validateHoldings(input: HoldingsInput, rowLabel: (i: number) => string, pathOf: (i: number, field: string) => string, trx?: Knex.Transaction): Promise<ValidatedHolding[]> {
  const issues: Issue[] = [];
  const symbols = input.holdings.map((h) => h.symbol.trim().toUpperCase());
  const known = new Map<string, number>();
  const wanted = [...new Set(symbols.filter(Boolean))];
  for (let start = 0; start < wanted.length; start += 1000) {
    const rows = (await db(trx)('assets').whereIn('symbol', wanted.slice(start, start + 1000)).select('id', 'symbol')) as { id: number; symbol: string }[];
    for (const r of rows) known.set(r.symbol.toUpperCase(), r.id);
  }
  const firstRow = new Map<string, number>();
  const valueField = input.mode === 'weights' ? 'weight' : 'marketValue';
  const valueName = input.mode === 'weights' ? 'weight' : 'market value';
  const values: number[] = [];
  input.holdings.forEach((h, i) => {
    const symbol = symbols[i];
    if (!symbol) issues.push({ path: pathOf(i, 'symbol'), message: `${rowLabel(i)}: the symbol is empty` });
    else if (!known.has(symbol)) issues.push({ path: pathOf(i, 'symbol'), message: `${rowLabel(i)}: unknown symbol '${symbol}' (no such asset in the stored return series)` });
    else if (firstRow.has(symbol)) issues.push({ path: pathOf(i, 'symbol'), message: `${rowLabel(i)}: '${symbol}' duplicates ${rowLabel(firstRow.get(symbol)!)}` });
    else firstRow.set(symbol, i);
    const value = input.mode === 'weights' ? h.weight : h.marketValue;
    if (value === null || value === undefined || !Number.isFinite(value)) issues.push({ path: pathOf(i, valueField), message: `${rowLabel(i)}${symbol ? ` (${symbol})` : ''}: the ${valueName} is missing` });
    values.push(value ?? NaN);
  });
  if (!issues.length && input.holdings.length) {
    const total = values.reduce((s, v) => s + v, 0);
    if (input.mode === 'weights') {
      const stated = input.weightUnit === 'percent' ? 100 : 1;
      if (Math.abs(total - stated) > WEIGHT_SUM_TOLERANCE * stated) {
        const shown = input.weightUnit === 'percent' ? `${round(total, 6)} %` : `${round(total, 8)}`;
        issues.push({ path: 'holdings', message: `the weights sum to ${shown}, not ${input.weightUnit === 'percent' ? '100 %' : '1'} as stated (tolerance ${WEIGHT_SUM_TOLERANCE * stated}); fix the weights or enter market values` });
      }
    } else if (!(total > 0)) {
      issues.push({ path: 'holdings', message: `the market values sum to ${round(total, 2)}: the total must be positive to turn them into weights` });
    }
  }
  if (issues.length) throw unprocessable(`The holdings are not valid (${issues.length} problem${issues.length === 1 ? '' : 's'})`, issues);
  const total = values.reduce((s, v) => s + v, 0);
  return input.holdings.map((_, i) => ({
    assetId: known.get(symbols[i])!,
    symbol: symbols[i],
    weight: values[i] / total, // normalised on save: exactly proportional to what was entered
    marketValue: input.mode === 'market-values' ? values[i] : null,
  }));
}

function round(x: number, digits: number): number {
  const f = 10 ** digits;
  return Math.round(x * f) / f;
}

export async function replaceHoldings(user: Actor, id: number, input: HoldingsInput, ip: string | null, source: 'grid' | 'csv' = 'grid', rowLabel = (i: number) => `row ${i + 1}`, pathOf = (i: number, field: string) => `holdings.${i}.${field}`): Promise<PortfolioDetail> {
  return db().transaction(async (trx) => {
    await editablePortfolio(user, id, trx);
    const validated = await validateHoldings(input, rowLabel, pathOf, trx);
    const before = await trx('portfolio_holdings').where({ portfolio_id: id }).count<{ count: number }[]>({ count: '*' }).first();
    await trx('portfolio_holdings').where({ portfolio_id: id }).delete();
    for (let start = 0; start < validated.length; start += 1000) {
      await trx('portfolio_holdings').insert(
        validated.slice(start, start + 1000).map((h, j) => ({ portfolio_id: id, asset_id: h.assetId, position: start + j, weight: h.weight, market_value: h.marketValue })),
      );
    }
    await trx('portfolios').where({ id }).update({ input_mode: input.mode, updated_at: trx.fn.now() });
    await recordAudit(
      {
        actor: user,
        action: 'portfolio.holdings-replaced',
        objectType: 'portfolio',
        objectId: id,
        ip,
        details: { source, mode: input.mode, weightUnit: input.weightUnit, before: Number(before?.count ?? 0), after: validated.length },
      },
      trx,
    );
    return getPortfolio(user, id, trx);
  });
}

/**
 * CSV holdings: a header `symbol,weight` or `symbol,market_value` (case and spaces ignored), one holding per line.
 * Errors name the file's line (the header is line 1).
 */
export function parseHoldingsCsv(text: string): { mode: 'weights' | 'market-values'; holdings: HoldingInput[] } {
  let records: string[][];
  try {
    records = parse(text.replace(/^\uFEFF/, ''), { skip_empty_lines: true, trim: true, relax_column_count: true }) as string[][];
  } catch (error) {
    throw badRequest(`The file is not readable CSV: ${(error as Error).message}`);
  }
  if (!records.length) throw unprocessable('The file is empty', [{ path: 'file', message: 'expected a header line: symbol,weight or symbol,market_value' }]);
  const header = records[0].map((h) => h.toLowerCase().replace(/[\s_-]+/g, ''));
  const symbolAt = header.indexOf('symbol');
  const weightAt = header.indexOf('weight');
  const valueAt = header.indexOf('marketvalue');
  if (symbolAt < 0 || (weightAt < 0) === (valueAt < 0)) {
    throw unprocessable('Line 1 must be the header symbol,weight or symbol,market_value', [{ path: 'line 1', message: `line 1: header '${records[0].join(',')}' is not symbol,weight or symbol,market_value` }]);
  }
  const mode = weightAt >= 0 ? 'weights' : 'market-values';
  const at = weightAt >= 0 ? weightAt : valueAt;
  const issues: Issue[] = [];
  const holdings = records.slice(1).map((cells, j) => {
    const line = j + 2;
    const raw = (cells[at] ?? '').replace(/,/g, '');
    const value = raw === '' ? null : Number(raw);
    if (raw !== '' && !Number.isFinite(value)) issues.push({ path: `line ${line}`, message: `line ${line}: '${cells[at]}' is not a number` });
    const number = value !== null && Number.isFinite(value) ? value : null;
    return { symbol: cells[symbolAt] ?? '', ...(mode === 'weights' ? { weight: number } : { marketValue: number }) };
  });
  if (issues.length) throw unprocessable(`The file is not valid (${issues.length} problem${issues.length === 1 ? '' : 's'})`, issues);
  return { mode, holdings };
}

export async function replaceHoldingsFromCsv(user: Actor, id: number, text: string, weightUnit: 'fraction' | 'percent', ip: string | null): Promise<PortfolioDetail> {
  const parsed = parseHoldingsCsv(text);
  return replaceHoldings(
    user,
    id,
    { mode: parsed.mode, weightUnit, holdings: parsed.holdings },
    ip,
    'csv',
    (i) => `line ${i + 2}`,
    (i) => `line ${i + 2}`,
  );
}

export { PortfolioHolding };
