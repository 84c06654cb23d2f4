/**
 * Demo step: two saved asset lists of Quillfield's analysts, made through the asset-list service (audited like a
 * list saved on the page). Runs after the return and portfolio steps, whose assets and funds they name.
 */
import type { Knex } from 'knex';
import { createAssetList } from '../services/assetListsService';
import { DEMO_PORTFOLIOS } from './portfolios';

const DEFENSIVE_SECTORS = ['Utilities', 'Consumer staples', 'Health care'];
export const DEMO_ASSET_LIST_NAMES = ['Core Equity holdings', 'Defensive sectors'];

export async function seedDemoAssetLists(knex: Knex, log: (message: string) => void = console.log): Promise<void> {
  const analyst = await knex('users').where({ email: 'analyst@quillfield.example' }).first('id', 'email', 'role');
  if (!analyst) throw new Error('demo analyst missing: seed users first');
  const core = (await knex('portfolio_holdings as h')
    .join('portfolios as p', 'p.id', 'h.portfolio_id')
    .join('assets as a', 'a.id', 'h.asset_id')
    .where('p.name', DEMO_PORTFOLIOS.core)
    .orderBy('h.position')
    .pluck('a.symbol')) as string[];
  const defensive = (await knex('assets as a')
    .whereIn('a.sector', DEFENSIVE_SECTORS)
    .whereExists(knex('return_observations as o').select(knex.raw('1')).whereRaw('o.asset_id = a.id'))
    .orderBy('a.symbol')
    .pluck('a.symbol')) as string[];
  const lists = [
    { name: DEMO_ASSET_LIST_NAMES[0], description: `The assets held in ${DEMO_PORTFOLIOS.core} when the demo was set up: a fit over exactly the fund's names.`, symbols: core },
    { name: DEMO_ASSET_LIST_NAMES[1], description: `Every demo asset in ${DEFENSIVE_SECTORS.join(', ')}.`, symbols: defensive },
  ].filter((list) => list.symbols.length >= 2);
  for (const list of lists) await createAssetList(analyst, list, null);
  log(`[seed] ${lists.length} saved asset lists (${lists.map((l) => `${l.symbols.length} assets`).join(', ')})`);
}
