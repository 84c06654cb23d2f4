import { Model } from 'objection';

/** One holding: a normalised weight (a portfolio's weights sum to one) and, when entered so, its market value. */
export class PortfolioHolding extends Model {
  static tableName = 'portfolio_holdings';

  id!: number;
  portfolio_id!: number;
  asset_id!: number;
  position!: number;
  weight!: number;
  market_value!: number | null;
}
