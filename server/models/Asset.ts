import { Model } from 'objection';

/** One instrument whose return series Loadline stores (symbol unique). */
export class Asset extends Model {
  static tableName = 'assets';

  id!: number;
  symbol!: string;
  name!: string;
  sector!: string | null;
  country!: string | null;
  currency!: string | null;
  asset_class!: string | null;
  last_batch_id!: number | null;
  created_at!: Date;
  updated_at!: Date;
}
