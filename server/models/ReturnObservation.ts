import { Model } from 'objection';

/** One stored simple return: (asset, date) → value. Written only by the import service. */
export class ReturnObservation extends Model {
  static tableName = 'return_observations';
  static idColumn = ['asset_id', 'date'];

  asset_id!: number;
  /** ISO date string (DATE columns stay strings, see server/db/knex.ts). */
  date!: string;
  value!: number;
}
