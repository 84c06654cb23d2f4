import { z } from 'zod';
import type { Config } from '../config';
import { apiRouter } from '../http/route';
import { requestIp } from '../services/auditService';
import { IdParamsSchema } from '../../shared/schemas/common';
import {
  CommentBodySchema,
  CompareQuerySchema,
  FactorScoresSchema,
  LoadingsQuerySchema,
  LoadingsSchema,
  MIN_OBSERVATIONS_PER_ASSET,
  ModelComparisonSchema,
  ModelResultsSchema,
  ModelRunListQuerySchema,
  ModelRunListSchema,
  ModelRunParametersSchema,
  ModelRunSchema,
} from '../../shared/schemas/modelRuns';
import { approveRun, cancelRun, compareRuns, createRun, getFactorScores, getLoadings, getResults, getRun, listRuns, retireRun } from '../services/modelRunService';
import { approvedModels } from '../services/modelStore';

const ApprovedModelsSchema = z
  .object({
    models: z.array(
      z.object({
        runId: z.number(),
        label: z.string(),
        estimator: z.string(),
        lifecycle: z.string(),
        approvedAt: z.string().nullable(),
        approvedBy: z.string().nullable(),
        createdAt: z.string(),
        firstDate: z.string(),
        lastDate: z.string(),
        assets: z.number(),
        observations: z.number(),
        factors: z.number(),
        periodsPerYear: z.number(),
      }),
    ),
  })
  .meta({ id: 'ApprovedModels' });

export function modelRunRoutes(config: Config) {
  const api = apiRouter('/model-runs', 'Model runs');
  const id = (params: { id: string }) => Number(params.id);

  api.route({
    method: 'post',
    path: '/',
    access: ['analyst', 'admin'],
    summary: 'Queue a model fit',
    description: `Validates the request against the stored data (universe, at least ${MIN_OBSERVATIONS_PER_ASSET} observations per asset in the window, factors below the number of assets), stores the run as queued and hands it to the background workers. Poll GET /api/model-runs/{id} for status and progress.`,
    body: ModelRunParametersSchema,
    response: ModelRunSchema,
    status: 201,
    handler: ({ body, user, req }) => createRun(config.databaseUrl, body, user, requestIp(req)),
  });

  api.route({
    method: 'get',
    path: '/',
    access: 'signed-in',
    summary: 'List model runs (newest first)',
    query: ModelRunListQuerySchema,
    response: ModelRunListSchema,
    handler: async ({ query }) => ({ runs: await listRuns(query) }),
  });

  api.route({
    method: 'get',
    path: '/approved',
    access: 'signed-in',
    summary: 'Approved model versions (newest approval first)',
    response: ApprovedModelsSchema,
    handler: async () => ({ models: await approvedModels() }),
  });

  api.route({
    method: 'get',
    path: '/:id',
    access: 'signed-in',
    summary: 'A run’s status, progress and lifecycle',
    params: IdParamsSchema,
    response: ModelRunSchema,
    handler: ({ params }) => getRun(id(params)),
  });

  api.route({
    method: 'get',
    path: '/:id/results',
    access: 'signed-in',
    summary: 'A succeeded run’s results: summary, diagnostics and per-asset figures',
    description: 'Specific volatility is annualised by √(periods per year) (common practice). 409 while the run has no result.',
    params: IdParamsSchema,
    response: ModelResultsSchema,
    handler: ({ params }) => getResults(id(params)),
  });

  api.route({
    method: 'get',
    path: '/:id/loadings',
    access: 'signed-in',
    summary: 'Loadings in the canonical or varimax orientation (orientation-dependent)',
    params: IdParamsSchema,
    query: LoadingsQuerySchema,
    response: LoadingsSchema,
    handler: ({ params, query }) => getLoadings(id(params), query.orientation),
  });

  api.route({
    method: 'get',
    path: '/:id/factor-scores',
    access: 'signed-in',
    summary: 'Factor return series (posterior mean factor scores, canonical orientation)',
    params: IdParamsSchema,
    response: FactorScoresSchema,
    handler: ({ params }) => getFactorScores(id(params)),
  });

  api.route({
    method: 'get',
    path: '/:id/compare',
    access: 'signed-in',
    summary: 'Compare two model versions (principal angles, communality and specific volatility changes, portfolio volatilities)',
    description: 'Portfolio volatilities cover the portfolios the caller may read (a portfolio manager: their own), annualised by √(periods per year), over the holdings each model covers.',
    params: IdParamsSchema,
    query: CompareQuerySchema,
    response: ModelComparisonSchema,
    handler: ({ params, query, user }) => compareRuns(id(params), Number(query.with), user),
  });

  api.route({
    method: 'post',
    path: '/:id/cancel',
    access: ['analyst', 'admin'],
    summary: 'Cancel a queued or running fit',
    params: IdParamsSchema,
    response: ModelRunSchema,
    handler: ({ params, user, req }) => cancelRun(config.databaseUrl, id(params), user, requestIp(req)),
  });

  api.route({
    method: 'post',
    path: '/:id/approve',
    access: ['analyst', 'admin'],
    summary: 'Approve a succeeded draft (a second analyst or an administrator, never the one who ran it)',
    params: IdParamsSchema,
    body: CommentBodySchema,
    response: ModelRunSchema,
    handler: ({ params, body, user, req }) => approveRun(id(params), body.comment, user, requestIp(req)),
  });

  api.route({
    method: 'post',
    path: '/:id/retire',
    access: ['analyst', 'admin'],
    summary: 'Retire an approved model',
    params: IdParamsSchema,
    body: CommentBodySchema,
    response: ModelRunSchema,
    handler: ({ params, body, user, req }) => retireRun(id(params), body.comment, user, requestIp(req)),
  });

  return api;
}
