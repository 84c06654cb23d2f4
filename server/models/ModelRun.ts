import { Model } from 'objection';
import type { Estimator, ModelRunParameters } from '../../shared/schemas/modelRuns';

export type RunStatus = 'queued' | 'running' | 'succeeded' | 'failed' | 'cancelled';
export type Lifecycle = 'draft' | 'approved' | 'retired';

/** One background fit (migrations/20261202020100_model_runs.ts). */
export class ModelRun extends Model {
  static tableName = 'model_runs';

  id!: number;
  label!: string;
  estimator!: Estimator;
  parameters!: ModelRunParameters;
  status!: RunStatus;
  progress_stage!: string | null;
  progress_iteration!: number | null;
  progress_log_likelihood!: number | null;
  progress_fraction!: number;
  heartbeat_at!: Date | null;
  error!: string | null;
  job_id!: string | null;
  worker!: string | null;
  attempts!: number;
  cancel_requested_at!: Date | null;
  created_by!: number;
  created_at!: Date;
  updated_at!: Date;
  started_at!: Date | null;
  finished_at!: Date | null;
  fit_seconds!: number | null;
  lifecycle!: Lifecycle;
  approved_by!: number | null;
  approved_at!: Date | null;
  approval_comment!: string | null;
  retired_by!: number | null;
  retired_at!: Date | null;
  retire_comment!: string | null;

  static get jsonAttributes() {
    return ['parameters'];
  }

  $beforeUpdate() {
    this.updated_at = new Date();
  }
}
