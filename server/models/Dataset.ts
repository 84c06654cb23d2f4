import { Model } from 'objection';

/** The stored dataset's settings (one row, id 1): its frequency and the kind of return stored. */
export class Dataset extends Model {
  static tableName = 'datasets';

  id!: number;
  name!: string;
  frequency!: 'daily' | 'weekly' | 'monthly' | null;
  return_kind!: 'simple';
}
