/**
 * The demo's approved models: after the demo returns exist, fit a factor-analysis model (and a probabilistic PCA
 * one) on the last 500 business days with every observed value (EM over the demo's odd missing days and gaps, about
 * 0.3 % of the window; keeping complete dates only would leave about 210 scattered dates and q = N/T above 1; EM
 * costs about 3 s more seed time), store them through the model services as runs by the
 * first demo analyst, and approve them as the second demo analyst, so portfolio pages have approved models from
 * the start. The engine runs directly here (no queue), deterministically.
 */
import type { Knex } from 'knex';
import { User } from '../models/User';
import { ModelRun } from '../models/ModelRun';
import { loadPanel } from '../services/modelPanel';
import { insertModelResult, resultOfFit } from '../services/modelStore';
import { insertRun } from '../services/modelRunService';
import { recordAudit } from '../services/auditService';
import { computeModelRun } from '../worker/fitCompute';
import { ModelRunParametersSchema, type ModelRunParametersInput } from '../../shared/schemas/modelRuns';

/** 10 invented sectors plus a market factor were planted in the demo returns. */
export const DEMO_MODEL_RUNS: ModelRunParametersInput[] = [
  { label: 'demo', universe: { kind: 'all' }, window: { kind: 'last', observations: 500 }, estimator: 'fa', factors: 11, weighting: { kind: 'equal' }, mean: 'sample', missing: 'em' },
  { label: 'demo', universe: { kind: 'all' }, window: { kind: 'last', observations: 500 }, estimator: 'ppca', factors: 11, weighting: { kind: 'equal' }, mean: 'sample', missing: 'em' },
];

export async function seedDemoModels(knex: Knex, log: (message: string) => void = console.log): Promise<void> {
  const analyst = await User.query(knex).findOne({ email: 'analyst@quillfield.example' });
  const approver = await User.query(knex).findOne({ email: 'analyst2@quillfield.example' });
  if (!analyst || !approver) return log('[seed] models skipped: demo analysts missing');
  const assets = await knex('return_observations').countDistinct<{ n: number }[]>({ n: 'asset_id' }).first();
  if (!assets || Number(assets.n) < 20) return log('[seed] models skipped: too few demo assets with returns');
  for (const input of DEMO_MODEL_RUNS) {
    const parameters = ModelRunParametersSchema.parse(input);
    const started = performance.now();
    const panel = await loadPanel(knex, parameters.universe, parameters.window, parameters.missing);
    const fit = computeModelRun({ values: panel.values, observations: panel.observations, assets: panel.assets }, parameters);
    const run = await knex.transaction(async (trx) => {
      const created = await insertRun(trx, parameters, analyst, null, { status: 'running', attempts: 1, started_at: new Date() } as Partial<ModelRun>);
      await insertModelResult(trx, created.id, resultOfFit(panel, fit, { missingShare: panel.missingShare, droppedAssets: panel.droppedAssets, droppedDates: panel.droppedDates, fitSeconds: fit.engineSeconds }));
      const comment = 'Demo model: spectrum and Heywood flags reviewed';
      await ModelRun.query(trx)
        .patch({ status: 'succeeded', finished_at: new Date(), progress_stage: 'done', progress_fraction: 1, fit_seconds: fit.engineSeconds, lifecycle: 'approved', approved_by: approver.id, approved_at: new Date(), approval_comment: comment })
        .where({ id: created.id });
      await recordAudit({ actor: approver, action: 'model-run.approved', objectType: 'model_run', objectId: created.id, details: { label: created.label, comment, createdBy: analyst.id } }, trx);
      return created;
    });
    log(`[seed] model ${run.label}: ${panel.assets} assets × ${panel.observations} dates, L = ${fit.model.kind === 'factor' ? fit.model.factors : 0}, approved (${((performance.now() - started) / 1000).toFixed(1)} s)`);
  }
}
