/**
 * Saved asset lists (a model run's universe { kind: 'list', listId }). Any signed-in user reads every list; analysts
 * and admins create them; the owner (or an admin) deletes. Lists are not edited: membership is fixed at creation,
 * so a queued run resolves to the assets the analyst saw when choosing the list.
 */
import type { Knex } from 'knex';
import { Model } from 'objection';
import type { AuthenticatedUser } from '../auth/access';
import { conflict, forbidden, notFound, unprocessable } from '../http/errors';
import { recordAudit } from './auditService';
import type { AssetListDetail, AssetListSummary, CreateAssetListBody } from '../../shared/schemas/assetLists';
import { CreateAssetListBodySchema } from '../../shared/schemas/assetLists';

type Actor = Pick<AuthenticatedUser, 'id' | 'email' | 'role'>;

const db = (): Knex => Model.knex() as Knex;

interface SummaryRow {
  id: number;
  name: string;
  description: string;
  owner_id: number;
  owner_name: string;
  owner_email: string;
  size: number;
  created_at: Date;
}

function summaryQuery(k: Knex | Knex.Transaction) {
  return k('asset_lists as l')
    .join('users as u', 'u.id', 'l.owner_id')
    .select(
      'l.id',
      'l.name',
      'l.description',
      'l.owner_id',
      'l.created_at',
      'u.name as owner_name',
      'u.email as owner_email',
      k.raw('(SELECT count(*)::int FROM asset_list_members m WHERE m.list_id = l.id) AS size'),
    );
}

const canDelete = (user: Actor, row: { owner_id: number }) => user.role === 'admin' || row.owner_id === user.id;

function toSummary(row: SummaryRow, user: Actor): AssetListSummary {
  return {
    id: row.id,
    name: row.name,
    description: row.description,
    owner: { id: row.owner_id, name: row.owner_name, email: row.owner_email },
    size: row.size,
    canDelete: canDelete(user, row),
    createdAt: new Date(row.created_at).toISOString(),
  };
}

export async function listAssetLists(user: Actor): Promise<AssetListSummary[]> {
  const rows: SummaryRow[] = await summaryQuery(db()).orderByRaw('lower(l.name), l.id');
  return rows.map((r) => toSummary(r, user));
}

export async function getAssetList(user: Actor, id: number, trx?: Knex.Transaction): Promise<AssetListDetail> {
  const k = trx ?? db();
  const row: SummaryRow | undefined = await summaryQuery(k).where('l.id', id).first();
  if (!row) throw notFound(`No asset list ${id}`);
  const assets = await k('asset_list_members as m')
    .join('assets as a', 'a.id', 'm.asset_id')
    .where('m.list_id', id)
    .orderBy('m.position')
    .select('a.id', 'a.symbol', 'a.name', 'a.sector');
  return { ...toSummary(row, user), assets };
}

/**
 * Creates a list from symbols in one transaction. Every problem is reported at once, each naming its row
 * (1-based, as entered) and symbol; on any problem nothing is stored.
 */
export async function createAssetList(user: Actor, input: CreateAssetListBody, ip: string | null): Promise<AssetListDetail> {
  const body = CreateAssetListBodySchema.parse(input);
  return db().transaction(async (trx) => {
    const symbols = body.symbols.map((s) => s.trim());
    const rows: { id: number; symbol: string }[] = await trx('assets').select('id', 'symbol').whereIn('symbol', [...new Set(symbols)]);
    const idOf = new Map(rows.map((r) => [r.symbol, r.id]));
    const issues: { path: string; message: string }[] = [];
    const firstRow = new Map<string, number>();
    symbols.forEach((symbol, k) => {
      const seen = firstRow.get(symbol);
      if (seen !== undefined) issues.push({ path: `symbols.${k}`, message: `row ${k + 1}: duplicate symbol ${symbol} (also row ${seen + 1})` });
      else {
        firstRow.set(symbol, k);
        if (!idOf.has(symbol)) issues.push({ path: `symbols.${k}`, message: `row ${k + 1}: unknown symbol ${symbol}` });
      }
    });
    if (issues.length) {
      throw unprocessable(`The list has ${issues.length} problem${issues.length > 1 ? 's' : ''}: ${issues.slice(0, 5).map((i) => i.message).join('; ')}${issues.length > 5 ? ' …' : ''}`, issues.slice(0, 200));
    }
    const clash = await trx('asset_lists').where({ owner_id: user.id }).whereRaw('lower(name) = lower(?)', [body.name]).first();
    if (clash) throw conflict(`You already have a list named "${clash.name}"`, [{ path: 'name', message: `you already have a list named "${clash.name}"` }]);
    const [{ id }] = await trx('asset_lists').insert({ name: body.name, description: body.description, owner_id: user.id }).returning('id');
    await trx('asset_list_members').insert(symbols.map((symbol, position) => ({ list_id: id, asset_id: idOf.get(symbol)!, position })));
    await recordAudit({ actor: user, action: 'asset-list.created', objectType: 'asset-list', objectId: id, ip, details: { name: body.name, size: symbols.length } }, trx);
    return getAssetList(user, id, trx);
  });
}

export async function deleteAssetList(user: Actor, id: number, ip: string | null): Promise<void> {
  await db().transaction(async (trx) => {
    const row = await trx('asset_lists').where({ id }).forUpdate().first();
    if (!row) throw notFound(`No asset list ${id}`);
    if (!canDelete(user, row)) throw forbidden('Only the list’s owner or an admin may delete it');
    const size = await trx('asset_list_members').where({ list_id: id }).count<{ count: string }[]>({ count: '*' }).first();
    await trx('asset_lists').where({ id }).delete();
    await recordAudit({ actor: user, action: 'asset-list.deleted', objectType: 'asset-list', objectId: id, ip, details: { name: row.name, size: Number(size?.count ?? 0) } }, trx);
  });
}

/** The assets of a list, ordered by symbol (a model run's universe); null when the list does not exist. */
export async function assetListMembers(k: Knex | Knex.Transaction, listId: number): Promise<{ id: number; symbol: string }[] | null> {
  const list = await k('asset_lists').where({ id: listId }).first('id');
  if (!list) return null;
  return k('asset_list_members as m').join('assets as a', 'a.id', 'm.asset_id').where('m.list_id', listId).orderBy('a.symbol').select('a.id', 'a.symbol');
}
