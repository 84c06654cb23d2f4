import { Model } from 'objection';

/** A fund or a benchmark portfolio (see migrations/20261202030100_portfolios.ts for access rules). */
export class Portfolio extends Model {
  static tableName = 'portfolios';

  id!: number;
  name!: string;
  kind!: 'fund' | 'benchmark';
  owner_id!: number;
  benchmark_portfolio_id!: number | null;
  description!: string;
  base_currency!: string;
  input_mode!: 'weights' | 'market-values';
  created_at!: Date;
  updated_at!: Date;

  $beforeUpdate() {
    this.updated_at = new Date();
  }
}
