/**
 * The model-fit job: claims the run, loads its panel from PostgreSQL, fits it in the fit thread while writing
 * progress and a heartbeat, and stores the result in one transaction. Failures are recorded with a readable reason.
 *
 * Never stuck in "running": a run whose heartbeat stops (its worker was killed) is found by the sweep, which fails
 * the pg-boss job so that pg-boss retries it on any live worker (retryLimit), or fails the run once the attempts are
 * used up. A late answer from a worker presumed dead is discarded (the claim's attempt number no longer matches).
 */
import { hostname } from 'node:os';
import type PgBoss from 'pg-boss';
import { listenTo } from '../db/listen';
import type { Knex } from 'knex';
import { Model } from 'objection';
import { ModelRun } from '../models/ModelRun';
import { HttpError } from '../http/errors';
import { loadPanel } from '../services/modelPanel';
import { insertModelResult, panelSha256, resultOfFit } from '../services/modelStore';
import { MODEL_FIT_CHANNEL, MODEL_FIT_QUEUE_OPTIONS, ensureModelFitQueue, modelFitQueue, type ModelFitJob } from '../services/modelQueue';
import { FitCancelled, FitThreadStopped, runFit, warmFitThread } from './fitPool';
import type { FitProgress } from '../engine/types';
import { STAGES } from './fitCompute';

export interface ModelJobOptions {
  /** Heartbeat period while a fit runs (ms). */
  heartbeatMs?: number;
  /** A running run whose heartbeat is older than this is presumed dead (s). */
  staleSeconds?: number;
  /** How often the sweep runs (ms). */
  sweepMs?: number;
  /** Queue polling interval (s, pg-boss minimum 0.5). */
  pollingIntervalSeconds?: number;
  log?: (message: string) => void;
}

const db = (): Knex => Model.knex();

/** This process, as recorded on the runs it takes. */
export const WORKER_NAME = `${hostname()}:${process.pid}`;

/** Share of the work done, for the progress bar: each engine stage spans a range; EM iterations approach its end. */
function fractionOf(p: FitProgress): number {
  if (p.stage === 'loading data') return 0.03;
  if (p.stage === 'storing') return 0.96;
  const stage = STAGES[p.stage];
  if (!stage) return 0.05;
  return stage.from + (stage.to - stage.from) * (1 - Math.exp(-p.iteration / 25));
}

const stageLabel = (stage: string) => STAGES[stage]?.label ?? stage;

export async function runModelFitJob(job: PgBoss.Job<ModelFitJob>, options: ModelJobOptions = {}): Promise<void> {
  const heartbeatMs = options.heartbeatMs ?? 1000;
  const { runId } = job.data;
  // Claim: only a queued run, or a running one whose previous worker died (the sweep re-queues those).
  const claimed = await db()('model_runs')
    .where({ id: runId })
    .whereIn('status', ['queued', 'running'])
    .whereNull('cancel_requested_at')
    .update({
      status: 'running',
      attempts: db().raw('attempts + 1'),
      started_at: db().fn.now(),
      heartbeat_at: db().fn.now(),
      updated_at: db().fn.now(),
      job_id: job.id,
      worker: WORKER_NAME,
      progress_stage: 'loading data',
      progress_iteration: 0,
      progress_log_likelihood: null,
      progress_fraction: 0.02,
    })
    .returning(['id', 'attempts', 'parameters', 'label']);
  if (!claimed.length) {
    // Cancelled while waiting (e.g. its previous worker died after the request): finish it as cancelled.
    await db()('model_runs').where({ id: runId }).whereIn('status', ['queued', 'running']).whereNotNull('cancel_requested_at').update({ status: 'cancelled', finished_at: db().fn.now(), updated_at: db().fn.now() });
    return; // cancelled, finished or gone: nothing to do
  }
  const { attempts, parameters } = claimed[0] as { attempts: number; parameters: ModelRun['parameters'] };
  const mine = () => db()('model_runs').where({ id: runId, attempts, status: 'running' });

  let latest: FitProgress = { stage: 'loading data', iteration: 0 };
  let cancelReason: string | null = null;
  let cancelFit: ((reason: string) => void) | null = null;
  let writing = false;
  const beat = async () => {
    if (writing) return;
    writing = true;
    try {
      const rows = await mine()
        .update({
          heartbeat_at: db().fn.now(),
          progress_stage: stageLabel(latest.stage),
          progress_iteration: latest.iteration,
          progress_log_likelihood: Number.isFinite(latest.logLikelihood ?? NaN) ? latest.logLikelihood : null,
          progress_fraction: fractionOf(latest),
        })
        .returning(['cancel_requested_at', 'error']);
      if (!rows.length) cancelReason ??= 'The run was taken over by another worker';
      else if (rows[0].cancel_requested_at) cancelReason ??= rows[0].error ?? 'Cancelled';
      if (cancelReason && cancelFit) cancelFit(cancelReason);
    } catch (error) {
      options.log?.(`[model-fit] heartbeat of run ${runId} failed: ${(error as Error).message}`);
    } finally {
      writing = false;
    }
  };
  const timer = setInterval(() => void beat(), heartbeatMs);
  try {
    const loadStarted = performance.now();
    const panel = await loadPanel(db(), parameters.universe, parameters.window, parameters.missing);
    const sha = panelSha256(panel.values);
    const loadSeconds = (performance.now() - loadStarted) / 1000;
    const fitStarted = performance.now();
    await beat();
    if (cancelReason) throw new FitCancelled(cancelReason);
    let lastWrite = 0;
    const handle = runFit(panel.values.slice(), panel.observations, panel.assets, parameters, (p) => {
      latest = p;
      const now = Date.now();
      if (now - lastWrite >= 250) {
        lastWrite = now;
        void beat();
      }
    });
    cancelFit = handle.cancel;
    if (cancelReason) handle.cancel(cancelReason);
    const fit = await handle.result;
    const threadSeconds = (performance.now() - fitStarted) / 1000;
    latest = { stage: 'storing', iteration: Number(fit.diagnostics.iterations ?? 0), logLikelihood: fit.logLikelihood ?? undefined };
    const stored = await db().transaction(async (trx) => {
      const updated = await trx('model_runs')
        .where({ id: runId, attempts, status: 'running' })
        .whereNull('cancel_requested_at')
        .update({
          status: 'succeeded',
          finished_at: trx.fn.now(),
          updated_at: trx.fn.now(),
          heartbeat_at: trx.fn.now(),
          progress_stage: 'done',
          progress_fraction: 1,
          progress_iteration: Number(fit.diagnostics.iterations ?? 0),
          progress_log_likelihood: fit.logLikelihood,
          fit_seconds: fit.engineSeconds,
          error: null,
        });
      if (!updated) return false;
      await insertModelResult(trx, runId, resultOfFit(panel, fit, { missingShare: panel.missingShare, droppedAssets: panel.droppedAssets, droppedDates: panel.droppedDates, fitSeconds: fit.engineSeconds, timings: { loadSeconds, threadSeconds, engineSeconds: fit.engineSeconds } }, sha));
      return true;
    });
    if (!stored) {
      const now = await ModelRun.query().findById(runId);
      if (now?.cancel_requested_at && now.status === 'running') await markFinished(runId, attempts, 'cancelled', now.error ?? 'Cancelled');
    }
  } catch (error) {
    if (error instanceof FitCancelled) {
      await markFinished(runId, attempts, 'cancelled', error.message);
    } else if (error instanceof FitThreadStopped) {
      // The worker is shutting down (or its thread died): back to the queue, and let pg-boss retry the job elsewhere.
      await db()('model_runs')
        .where({ id: runId, attempts, status: 'running' })
        .update({ status: 'queued', progress_stage: 'waiting for a worker (previous worker stopped)', progress_fraction: 0, error: `A worker stopped during attempt ${attempts}; retrying`, updated_at: db().fn.now() });
      throw error;
    } else {
      const reason = error instanceof HttpError ? error.message : `The fit failed: ${(error as Error).message}`;
      options.log?.(`[model-fit] run ${runId} failed: ${reason}`);
      await markFinished(runId, attempts, 'failed', reason);
    }
  } finally {
    clearInterval(timer);
  }
}

async function markFinished(runId: number, attempts: number, status: 'failed' | 'cancelled', reason: string): Promise<void> {
  await db()('model_runs')
    .where({ id: runId, attempts })
    .whereIn('status', ['running', 'queued'])
    .update({ status, error: reason, finished_at: db().fn.now(), updated_at: db().fn.now() });
}

/** The pg-boss job of a run (any queue, live or archived), or null when pg-boss no longer has it. */
async function jobOf(jobId: string | null): Promise<{ id: string; name: string; state: string } | null> {
  if (!jobId) return null;
  const rows = await db().raw(
    `SELECT id::text, name, state::text FROM pgboss.job WHERE id = ?::uuid UNION ALL SELECT id::text, name, state::text FROM pgboss.archive WHERE id = ?::uuid LIMIT 1`,
    [jobId, jobId],
  );
  return rows.rows[0] ?? null;
}

/**
 * Finds runs left behind by dead processes (only runs of this worker's queue; a job pg-boss no longer has counts too):
 *  - running with a stale heartbeat: fail its pg-boss job (pg-boss then retries it while retries remain) and put the
 *    run back to queued; once its attempts are used up, fail the run with the reason; cancelled when a cancel was asked;
 *  - queued with no job (the web server stopped between storing the run and sending the job): send it now;
 *  - queued whose job pg-boss holds as failed, cancelled or completed (or no longer holds): fail the run.
 */
export async function sweepModelRuns(boss: PgBoss, staleSeconds: number, log: (m: string) => void = () => {}): Promise<number> {
  let touched = 0;
  const queue = modelFitQueue();
  const maxAttempts = MODEL_FIT_QUEUE_OPTIONS.retryLimit + 1;
  const stale: ModelRun[] = await ModelRun.query().where('status', 'running').where('heartbeat_at', '<', db().raw(`now() - make_interval(secs => ?)`, [staleSeconds]));
  for (const run of stale) {
    const job = await jobOf(run.job_id);
    if (job && job.name !== queue) continue; // another queue's workers look after it
    if (run.cancel_requested_at) {
      // Its worker died after a cancel request: nothing to retry.
      await db()('model_runs').where({ id: run.id, attempts: run.attempts, status: 'running' }).update({ status: 'cancelled', finished_at: db().fn.now(), updated_at: db().fn.now() });
      if (job?.state === 'active') await boss.cancel(queue, job.id).catch(() => undefined);
      touched++;
      continue;
    }
    if (run.attempts < maxAttempts && job) {
      const moved = await db()('model_runs').where({ id: run.id, attempts: run.attempts, status: 'running' }).update({ status: 'queued', progress_stage: 'waiting for a worker (previous worker stopped)', progress_fraction: 0, error: `A worker stopped during attempt ${run.attempts}; retrying`, updated_at: db().fn.now() });
      if (moved && job.state === 'active') await boss.fail(queue, job.id, { reason: 'worker stopped responding' }).catch(() => undefined);
      if (moved && (job.state === 'failed' || job.state === 'completed' || job.state === 'cancelled')) {
        // pg-boss already gave up on the job: queue a fresh one for the next attempt.
        const id = await boss.send(queue, { runId: run.id });
        if (id) await db()('model_runs').where({ id: run.id }).update({ job_id: id });
      }
      if (moved) log(`[model-fit] run ${run.id}: worker stopped responding, retrying`);
    } else {
      await db()('model_runs')
        .where({ id: run.id, attempts: run.attempts, status: 'running' })
        .update({ status: 'failed', error: `The worker stopped responding during the fit (${run.attempts} attempt${run.attempts === 1 ? '' : 's'}); giving up`, finished_at: db().fn.now(), updated_at: db().fn.now() });
      if (job?.state === 'active') await boss.fail(queue, job.id, { reason: 'gave up' }).catch(() => undefined);
      log(`[model-fit] run ${run.id}: worker stopped responding, failed`);
    }
    touched++;
  }
  const orphans: ModelRun[] = await ModelRun.query().where('status', 'queued').whereNull('job_id').where('created_at', '<', db().raw(`now() - interval '30 seconds'`));
  for (const run of orphans) {
    const id = await boss.send(queue, { runId: run.id });
    if (id) await db()('model_runs').where({ id: run.id }).whereNull('job_id').update({ job_id: id });
    touched++;
  }
  const queued: ModelRun[] = await ModelRun.query().where('status', 'queued').whereNotNull('job_id').where('updated_at', '<', db().raw(`now() - make_interval(secs => ?)`, [staleSeconds]));
  for (const run of queued) {
    const job = await jobOf(run.job_id);
    if (job && job.name !== queue) continue;
    if (!job || job.state === 'failed' || job.state === 'cancelled' || job.state === 'completed') {
      await db()('model_runs').where({ id: run.id, status: 'queued' }).update({ status: 'failed', error: run.error ?? 'The queue no longer holds this run’s job', finished_at: db().fn.now(), updated_at: db().fn.now() });
      touched++;
    }
  }
  return touched;
}

/** Wakes the given pg-boss worker whenever the web server announces a job on this queue (LISTEN/NOTIFY). */
async function listenForJobs(boss: PgBoss, workerId: string, log: (m: string) => void): Promise<() => Promise<void>> {
  const listener = listenTo(
    MODEL_FIT_CHANNEL,
    (payload) => {
      if (payload === modelFitQueue()) boss.notifyWorker(workerId);
    },
    { onState: (up, error) => (up ? undefined : log(`[model-fit] job notifications lost (${error?.message}); polling until they are back`)) },
  );
  await listener.ready;
  return () => listener.stop();
}

/** Registers the model-fit queue and handler on a started pg-boss; returns a function that stops the sweep and the listener. */
export async function registerModelFitJobs(boss: PgBoss, options: ModelJobOptions = {}): Promise<() => void> {
  await ensureModelFitQueue(boss);
  await warmFitThread();
  const log = options.log ?? ((m: string) => console.log(m));
  const workerId = await boss.work<ModelFitJob>(modelFitQueue(), { batchSize: 1, pollingIntervalSeconds: options.pollingIntervalSeconds ?? 0.5 }, async (jobs) => {
    for (const job of jobs) await runModelFitJob(job, { ...options, log });
  });
  const stopListening = await listenForJobs(boss, workerId, log);
  const staleSeconds = options.staleSeconds ?? 30;
  let sweeping = false;
  const sweep = async () => {
    if (sweeping) return;
    sweeping = true;
    try {
      await sweepModelRuns(boss, staleSeconds, log);
    } catch (error) {
      log(`[model-fit] sweep failed: ${(error as Error).message}`);
    } finally {
      sweeping = false;
    }
  };
  void sweep();
  const timer = setInterval(() => void sweep(), options.sweepMs ?? 10_000);
  timer.unref();
  return () => {
    clearInterval(timer);
    void stopListening();
  };
}
