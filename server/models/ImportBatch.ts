import { Model } from 'objection';

/** One upload of return series or asset metadata: who, when, which file, options, counts and outcome. */
export class ImportBatch extends Model {
  static tableName = 'import_batches';

  id!: number;
  ref!: string;
  user_id!: number | null;
  user_email!: string | null;
  kind!: 'returns' | 'asset-metadata';
  file_name!: string;
  file_size!: number;
  sha256!: string;
  options!: Record<string, unknown>;
  status!: 'previewed' | 'committed' | 'rejected' | 'failed';
  frequency!: string | null;
  rows_read!: number;
  inserted!: number;
  replaced!: number;
  skipped!: number;
  rejected!: number;
  assets_created!: number;
  problem_count!: number;
  warning_count!: number;
  problems!: unknown[];
  summary!: Record<string, unknown>;
  duration_ms!: number | null;
  created_at!: Date;
  committed_at!: Date | null;
}
