import { Model } from 'objection';

/** The old and new value of an observation an import replaced. */
export class ObservationRevision extends Model {
  static tableName = 'observation_revisions';

  id!: number;
  batch_id!: number;
  asset_id!: number;
  date!: string;
  old_value!: number;
  new_value!: number;
}
