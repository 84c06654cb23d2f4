/** Data quality of the stored return series, computed in SQL. */
import { Model } from 'objection';
import type { Coverage, DataQuality } from '../../shared/schemas/dataQuality';

const PERIODS_PER_YEAR: Record<string, number> = { daily: 252, weekly: 52, monthly: 12 }; // common practice

/**
 * Per asset: history span, count, missing share, mean, annualised volatility (σ·√periods — square-root-of-time,
 * common practice), min, max and robust outliers: modified z-score 0.6745 (x − median) / MAD above 3.5
 * (Iglewicz & Hoaglin 1993, "How to Detect and Handle Outliers").
 */
export async function dataQuality(): Promise<DataQuality> {
  const knex = Model.knex();
  const dataset = await knex('datasets').where({ id: 1 }).first('frequency');
  const frequency: string | null = dataset?.frequency ?? null;
  const periodsPerYear = PERIODS_PER_YEAR[frequency ?? 'daily'];
  const expected =
    frequency === 'weekly'
      ? `(floor((s.last_date - s.first_date) / 7.0) + 1)`
      : frequency === 'monthly'
        ? `((extract(year from s.last_date) - extract(year from s.first_date)) * 12 + extract(month from s.last_date) - extract(month from s.first_date) + 1)`
        : `(SELECT count(*) FROM generate_series(s.first_date, s.last_date, interval '1 day') g WHERE extract(isodow from g) < 6)`;
  const { rows } = await knex.raw(
    `
    WITH s AS (
      SELECT asset_id, min(date) AS first_date, max(date) AS last_date, count(*)::int AS n, avg(value) AS mean,
             stddev_samp(value) AS sd, min(value) AS min, max(value) AS max,
             percentile_cont(0.5) WITHIN GROUP (ORDER BY value) AS median
        FROM return_observations GROUP BY asset_id
    ), m AS (
      SELECT o.asset_id, percentile_cont(0.5) WITHIN GROUP (ORDER BY abs(o.value - s.median)) AS mad
        FROM return_observations o JOIN s USING (asset_id) GROUP BY o.asset_id
    ), z AS (
      SELECT o.asset_id, count(*) FILTER (WHERE m.mad > 0 AND abs(0.6745 * (o.value - s.median) / m.mad) > 3.5)::int AS outliers
        FROM return_observations o JOIN s USING (asset_id) JOIN m USING (asset_id) GROUP BY o.asset_id
    )
    SELECT a.id AS asset_id, a.symbol, a.name, a.sector, s.first_date::text AS first_date, s.last_date::text AS last_date,
           coalesce(s.n, 0) AS n, s.mean, s.sd, s.min, s.max, coalesce(z.outliers, 0) AS outliers,
           CASE WHEN s.n IS NULL THEN NULL ELSE greatest(0, 1 - s.n::float8 / greatest(${expected}, 1)) END AS missing_share,
           b.id AS batch_id, coalesce(b.committed_at, b.created_at) AS batch_at
      FROM assets a LEFT JOIN s ON s.asset_id = a.id LEFT JOIN z ON z.asset_id = a.id
      LEFT JOIN import_batches b ON b.id = a.last_batch_id
     ORDER BY a.symbol`,
  );
  return {
    frequency,
    periodsPerYear,
    assets: (rows as Record<string, unknown>[]).map((r) => ({
      assetId: r.asset_id as number,
      symbol: r.symbol as string,
      name: r.name as string,
      sector: (r.sector as string) ?? null,
      firstDate: (r.first_date as string) ?? null,
      lastDate: (r.last_date as string) ?? null,
      observations: Number(r.n),
      missingShare: r.missing_share === null ? null : Number(r.missing_share),
      mean: (r.mean as number) ?? null,
      annualisedVolatility: r.sd === null || r.sd === undefined ? null : Number(r.sd) * Math.sqrt(periodsPerYear),
      min: (r.min as number) ?? null,
      max: (r.max as number) ?? null,
      outliers: Number(r.outliers),
      lastImportId: (r.batch_id as number) ?? null,
      lastImportAt: r.batch_at ? new Date(r.batch_at as string).toISOString() : null,
    })),
  };
}

/** Coverage by asset and month: the share of the month's dates in the stored calendar on which the asset has a value. */
export async function coverage(): Promise<Coverage> {
  const knex = Model.knex();
  const { rows: months } = await knex.raw(
    `SELECT to_char(date_trunc('month', date), 'YYYY-MM') AS month, count(DISTINCT date)::int AS dates FROM return_observations GROUP BY 1 ORDER BY 1`,
  );
  const { rows: assets } = await knex.raw(`SELECT a.id, a.symbol, a.sector FROM assets a WHERE EXISTS (SELECT 1 FROM return_observations o WHERE o.asset_id = a.id) ORDER BY a.sector NULLS LAST, a.symbol`);
  const { rows: counts } = await knex.raw(
    `SELECT asset_id, to_char(date_trunc('month', date), 'YYYY-MM') AS month, count(*)::int AS n FROM return_observations GROUP BY 1, 2`,
  );
  const monthIndex = new Map<string, number>((months as { month: string }[]).map((m, i) => [m.month, i]));
  const assetIndex = new Map<number, number>((assets as { id: number }[]).map((a, i) => [a.id, i]));
  const cells = (assets as unknown[]).map(() => new Array<number>(months.length).fill(0));
  for (const c of counts as { asset_id: number; month: string; n: number }[]) {
    const i = assetIndex.get(c.asset_id);
    const j = monthIndex.get(c.month);
    if (i !== undefined && j !== undefined) cells[i][j] = Math.min(1, c.n / (months[j] as { dates: number }).dates);
  }
  return {
    months: (months as { month: string }[]).map((m) => m.month),
    assets: (assets as { symbol: string; sector: string | null }[]).map((a) => ({ symbol: a.symbol, sector: a.sector })),
    cells,
  };
}
