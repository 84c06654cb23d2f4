import type { Knex } from 'knex';

/**
 * Model runs (background fits) and their stored results.
 *
 * Storage of numeric arrays: every vector or matrix in model_results is a `bytea` holding the IEEE 754 doubles of a
 * Float64Array in little-endian byte order (row-major for matrices; shapes in the row's integer columns). This is
 * exact, compact (8 bytes a number; a 1000 × 750 panel's factor scores at L = 10 are 60 kB) and decodes without
 * parsing text; server/services/modelStore.ts encodes and decodes it. Small structures (diagnostics, criteria table,
 * spectrum) stay in jsonb so they remain readable from psql.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('model_runs', (t) => {
    t.increments('id').primary();
    t.text('label').notNullable(); // version label shown everywhere, e.g. "FA-0007"
    t.text('estimator').notNullable(); // fa | ppca | sample | ledoit-wolf (also in parameters)
    t.jsonb('parameters').notNullable(); // the validated run request (shared/schemas/modelRuns.ts ModelRunParameters)
    t.text('status').notNullable().defaultTo('queued');
    // Progress, written by the worker (pg-boss 10 has no progress API); heartbeat_at tells live fits from dead ones.
    t.text('progress_stage');
    t.integer('progress_iteration');
    t.double('progress_log_likelihood');
    t.double('progress_fraction').notNullable().defaultTo(0);
    t.timestamp('heartbeat_at', { useTz: true });
    t.text('error'); // readable reason when failed or cancelled
    t.text('job_id'); // pg-boss job id
    t.integer('attempts').notNullable().defaultTo(0);
    t.timestamp('cancel_requested_at', { useTz: true });
    t.integer('created_by').notNullable().references('users.id');
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp('updated_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp('started_at', { useTz: true });
    t.timestamp('finished_at', { useTz: true });
    t.double('fit_seconds'); // engine time inside the worker
    // Lifecycle: draft → approved (by someone other than the creator) → retired.
    t.text('lifecycle').notNullable().defaultTo('draft');
    t.integer('approved_by').references('users.id');
    t.timestamp('approved_at', { useTz: true });
    t.text('approval_comment');
    t.integer('retired_by').references('users.id');
    t.timestamp('retired_at', { useTz: true });
    t.text('retire_comment');
    t.index(['status']);
    t.index(['lifecycle', 'estimator']);
  });
  await knex.raw(`
    ALTER TABLE model_runs ADD CONSTRAINT model_runs_status_check CHECK (status IN ('queued','running','succeeded','failed','cancelled'));
    ALTER TABLE model_runs ADD CONSTRAINT model_runs_estimator_check CHECK (estimator IN ('fa','ppca','sample','ledoit-wolf'));
    ALTER TABLE model_runs ADD CONSTRAINT model_runs_lifecycle_check CHECK (lifecycle IN ('draft','approved','retired'));
    ALTER TABLE model_runs ADD CONSTRAINT model_runs_approval_check CHECK (lifecycle = 'draft' OR (approved_by IS NOT NULL AND status = 'succeeded'));
    ALTER TABLE model_runs ADD CONSTRAINT model_runs_four_eyes CHECK (approved_by IS NULL OR approved_by <> created_by);
    CREATE UNIQUE INDEX model_runs_label_unique ON model_runs (label);
  `);

  await knex.schema.createTable('model_results', (t) => {
    t.integer('run_id').primary().references('model_runs.id').onDelete('CASCADE');
    t.text('method').notNullable(); // fa | ppca | sample | ledoit-wolf
    t.integer('assets').notNullable(); // N
    t.integer('observations').notNullable(); // T
    t.integer('factors').notNullable(); // L (0 for dense models)
    t.integer('periods_per_year').notNullable(); // 252 daily, 52 weekly, 12 monthly (common practice)
    // Data fingerprint: which assets, which dates, and the SHA-256 of the values used (row-major T × N doubles, NaN = missing).
    t.specificType('asset_ids', 'integer[]').notNullable(); // asset order of every array below
    t.specificType('asset_symbols', 'text[]').notNullable();
    t.specificType('dates', 'date[]').notNullable();
    t.text('data_sha256').notNullable();
    t.binary('mean').notNullable(); // N
    t.binary('loadings'); // N × L, canonical orientation (factor models)
    t.binary('specific_variance'); // N (σ² repeated for PPCA)
    t.binary('covariance'); // N × N (dense models only)
    t.binary('factor_scores'); // T × L posterior means (factor models)
    t.double('log_likelihood');
    t.jsonb('diagnostics').notNullable().defaultTo('{}');
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('model_results');
  await knex.schema.dropTable('model_runs');
}
