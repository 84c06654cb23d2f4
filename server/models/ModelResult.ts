import { Model } from 'objection';

/** The stored outcome of a succeeded run; numeric arrays are little-endian Float64 bytea (see modelStore.ts). */
export class ModelResult extends Model {
  static tableName = 'model_results';
  static idColumn = 'run_id';

  run_id!: number;
  method!: 'fa' | 'ppca' | 'sample' | 'ledoit-wolf';
  assets!: number;
  observations!: number;
  factors!: number;
  periods_per_year!: number;
  asset_ids!: number[];
  asset_symbols!: string[];
  dates!: string[];
  data_sha256!: string;
  mean!: Buffer;
  loadings!: Buffer | null;
  specific_variance!: Buffer | null;
  covariance!: Buffer | null;
  factor_scores!: Buffer | null;
  log_likelihood!: number | null;
  diagnostics!: Record<string, unknown>;
  created_at!: Date;

  static get jsonAttributes() {
    return ['diagnostics'];
  }
}
