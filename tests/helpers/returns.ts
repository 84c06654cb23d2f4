import type { Knex } from 'knex';

/** `count` business days (Monday to Friday) from `start`. */
export function businessDays(count: number, start = '2019-01-01'): string[] {
  const out: string[] = [];
  const d = new Date(`${start}T00:00:00Z`);
  while (out.length < count) {
    const day = d.getUTCDay();
    if (day !== 0 && day !== 6) out.push(d.toISOString().slice(0, 10));
    d.setUTCDate(d.getUTCDate() + 1);
  }
  return out;
}

/**
 * Inserts invented assets `${prefix}0000…` (sorted order) and their T × N row-major returns straight into the tables
 * the import service writes; NaN values are left out (missing). Answers the symbols.
 */
export async function insertPanel(knex: Knex, prefix: string, values: Float64Array, t: number, n: number, dates = businessDays(t), sector = 'Test sector'): Promise<string[]> {
  const symbols = Array.from({ length: n }, (_, i) => `${prefix}${String(i).padStart(4, '0')}`);
  const assets: { id: number; symbol: string }[] = await knex('assets')
    .insert(symbols.map((symbol) => ({ symbol, name: `Invented asset ${symbol}`, sector })))
    .returning(['id', 'symbol']);
  const idOf = new Map(assets.map((a) => [a.symbol, a.id]));
  const ids: number[] = [];
  const ds: string[] = [];
  const vs: number[] = [];
  for (let r = 0; r < t; r++) {
    for (let i = 0; i < n; i++) {
      const v = values[r * n + i];
      if (Number.isNaN(v)) continue;
      ids.push(idOf.get(symbols[i])!);
      ds.push(dates[r]);
      vs.push(v);
    }
  }
  await knex.raw('INSERT INTO return_observations (asset_id, date, value) SELECT * FROM unnest(?::int[], ?::date[], ?::float8[])', [ids, ds, vs]);
  return symbols;
}
