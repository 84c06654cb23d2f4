import { z } from 'zod';
import { IsoDateSchema } from './common';

/** Fewest observations per asset a window must hold before a fit is attempted (also the UI's stated minimum). */
export const MIN_OBSERVATIONS_PER_ASSET = 30;
/** Largest number of factors the form offers; "recommend" searches 1 … this bound (capped below N). */
export const MAX_FACTORS = 30;

export const ESTIMATORS = ['fa', 'ppca', 'sample', 'ledoit-wolf'] as const;
export const EstimatorSchema = z.enum(ESTIMATORS).meta({ id: 'Estimator', description: 'fa = maximum-likelihood factor analysis, ppca = probabilistic PCA, sample covariance, Ledoit–Wolf shrinkage' });
export type Estimator = z.infer<typeof EstimatorSchema>;
export const ESTIMATOR_LABELS: Record<Estimator, string> = {
  fa: 'Factor analysis (maximum likelihood)',
  ppca: 'Probabilistic PCA',
  sample: 'Sample covariance',
  'ledoit-wolf': 'Ledoit–Wolf shrinkage',
};
export const isFactorEstimator = (e: Estimator) => e === 'fa' || e === 'ppca';

export const UniverseSchema = z.discriminatedUnion('kind', [
  z.object({ kind: z.literal('all') }),
  z.object({ kind: z.literal('sectors'), sectors: z.array(z.string().min(1)).min(1, 'choose at least one sector') }),
  z.object({ kind: z.literal('assets'), symbols: z.array(z.string().min(1)).min(2, 'list at least two symbols') }),
  /** A saved asset list (shared/schemas/assetLists.ts). */
  z.object({ kind: z.literal('list'), listId: z.number().int('choose a saved list').positive('choose a saved list') }),
]);
export type Universe = z.infer<typeof UniverseSchema>;

export const WindowSchema = z.discriminatedUnion('kind', [
  z.object({ kind: z.literal('last'), observations: z.number().int().min(MIN_OBSERVATIONS_PER_ASSET, `the window needs at least ${MIN_OBSERVATIONS_PER_ASSET} observations`).max(100000) }),
  z
    .object({ kind: z.literal('dates'), from: IsoDateSchema, to: IsoDateSchema })
    .refine((w) => w.from <= w.to, { message: 'the start date must not be after the end date', path: ['to'] }),
]);
export type EstimationWindow = z.infer<typeof WindowSchema>;

export const WeightingSchema = z.discriminatedUnion('kind', [
  z.object({ kind: z.literal('equal') }),
  z.object({ kind: z.literal('exponential'), halfLife: z.number().positive('the half-life must be positive').max(100000) }),
]);

export const MissingPolicySchema = z
  .enum(['em', 'complete-rows', 'drop-assets'])
  .meta({ description: 'em: use every observed value (EM / pairwise, the engine’s missing-data method); complete-rows: keep only dates where every asset is observed; drop-assets: leave out assets with any gap in the window' });
export type MissingPolicy = z.infer<typeof MissingPolicySchema>;

export const ModelRunParametersSchema = z
  .object({
    label: z.string().trim().min(1).max(60).optional(),
    universe: UniverseSchema,
    window: WindowSchema,
    weighting: WeightingSchema.default({ kind: 'equal' }),
    mean: z.enum(['sample', 'zero']).default('sample'),
    estimator: EstimatorSchema,
    /** A number of factors, or 'recommend' to let the criteria table decide (factor estimators only). */
    factors: z.union([z.number().int().min(1, 'at least one factor').max(MAX_FACTORS, `at most ${MAX_FACTORS} factors`), z.literal('recommend')]).optional(),
    missing: MissingPolicySchema.default('em'),
  })
  .superRefine((p, ctx) => {
    if (isFactorEstimator(p.estimator) && p.factors === undefined) ctx.addIssue({ code: 'custom', path: ['factors'], message: 'choose a number of factors or "recommend"' });
  })
  .meta({ id: 'ModelRunParameters' });
export type ModelRunParameters = z.infer<typeof ModelRunParametersSchema>;
export type ModelRunParametersInput = z.input<typeof ModelRunParametersSchema>;

export const RUN_STATUSES = ['queued', 'running', 'succeeded', 'failed', 'cancelled'] as const;
export const LIFECYCLES = ['draft', 'approved', 'retired'] as const;

const UserRefSchema = z.object({ id: z.number(), name: z.string(), email: z.string() }).nullable();

export const ModelRunSchema = z
  .object({
    id: z.number(),
    label: z.string(),
    estimator: EstimatorSchema,
    parameters: ModelRunParametersSchema,
    status: z.enum(RUN_STATUSES),
    progress: z.object({ stage: z.string().nullable(), iteration: z.number().nullable(), logLikelihood: z.number().nullable(), fraction: z.number() }),
    error: z.string().nullable(),
    attempts: z.number(),
    worker: z.string().nullable(),
    createdBy: UserRefSchema,
    createdAt: z.string(),
    startedAt: z.string().nullable(),
    finishedAt: z.string().nullable(),
    fitSeconds: z.number().nullable(),
    lifecycle: z.enum(LIFECYCLES),
    approvedBy: UserRefSchema,
    approvedAt: z.string().nullable(),
    approvalComment: z.string().nullable(),
    retiredBy: UserRefSchema,
    retiredAt: z.string().nullable(),
    retireComment: z.string().nullable(),
    summary: z
      .object({ assets: z.number(), observations: z.number(), factors: z.number(), firstDate: z.string().nullable(), lastDate: z.string().nullable() })
      .nullable(),
  })
  .meta({ id: 'ModelRun' });
export type ModelRun = z.infer<typeof ModelRunSchema>;

export const ModelRunListSchema = z.object({ runs: z.array(ModelRunSchema) }).meta({ id: 'ModelRunList' });

export const ModelRunListQuerySchema = z.object({
  lifecycle: z.enum(LIFECYCLES).optional(),
  status: z.enum(RUN_STATUSES).optional(),
  estimator: EstimatorSchema.optional(),
  assetList: z.string().regex(/^\d+$/, 'must be an asset list id').optional().meta({ description: 'Only runs whose universe is this saved asset list.' }),
  limit: z.coerce.number().int().min(1).max(500).default(100),
});

export const CommentBodySchema = z.object({ comment: z.string().trim().min(3, 'say why in a few words').max(2000) }).meta({ id: 'LifecycleComment' });

export const CriterionRowSchema = z.object({
  factors: z.number(),
  logLikelihood: z.number().nullable(),
  aic: z.number().nullable(),
  bic: z.number().nullable(),
  extra: z.record(z.string(), z.number().nullable()).optional(),
});

export const ModelDiagnosticsSchema = z
  .object({
    logLikelihoodTrace: z.array(z.number()),
    iterations: z.number(),
    evaluations: z.number().nullable(),
    converged: z.boolean(),
    heywood: z.array(z.boolean()),
    eigenvalues: z.array(z.number()),
    marchenkoPasturEdge: z.number().nullable(),
    noiseVariance: z.number().nullable(),
    effectiveSampleSize: z.number(),
    decayFactor: z.number().nullable(),
    totalVariance: z.number(),
    factorVariance: z.number().nullable(),
    explainedShare: z.number().nullable(),
    criteria: z.array(CriterionRowSchema).nullable(),
    recommendedFactors: z.number().nullable(),
    recommendationReason: z.string().nullable(),
    missingShare: z.number(),
    missingMethod: z.string(),
    droppedAssets: z.array(z.string()),
    droppedDates: z.number(),
    fitSeconds: z.number(),
  })
  .partial()
  .passthrough();
export type ModelDiagnostics = z.infer<typeof ModelDiagnosticsSchema>;

export const ModelAssetRowSchema = z.object({
  assetId: z.number(),
  symbol: z.string(),
  name: z.string().nullable(),
  sector: z.string().nullable(),
  mean: z.number(),
  variance: z.number(),
  communality: z.number().nullable(),
  specificVariance: z.number(),
  specificVolatility: z.number(),
  factorShare: z.number().nullable(),
  heywood: z.boolean(),
});

export const ModelResultsSchema = z
  .object({
    run: ModelRunSchema,
    method: EstimatorSchema,
    assets: z.number(),
    observations: z.number(),
    factors: z.number(),
    periodsPerYear: z.number(),
    firstDate: z.string(),
    lastDate: z.string(),
    dataSha256: z.string(),
    logLikelihood: z.number().nullable(),
    diagnostics: ModelDiagnosticsSchema,
    assetRows: z.array(ModelAssetRowSchema),
  })
  .meta({ id: 'ModelResults' });
export type ModelResults = z.infer<typeof ModelResultsSchema>;

export const LoadingsQuerySchema = z.object({ orientation: z.enum(['canonical', 'varimax']).default('canonical') });
export const LoadingsSchema = z
  .object({
    orientation: z.enum(['canonical', 'varimax']),
    note: z.string(),
    symbols: z.array(z.string()),
    factors: z.number(),
    /** N rows × L columns. */
    loadings: z.array(z.array(z.number())),
  })
  .meta({ id: 'ModelLoadings' });

export const FactorScoresSchema = z
  .object({ dates: z.array(z.string()), factors: z.number(), scores: z.array(z.array(z.number())), note: z.string() })
  .meta({ id: 'ModelFactorScores' });

export const CompareQuerySchema = z.object({ with: z.string().regex(/^\d+$/, 'must be a run id') });
export const ModelComparisonSchema = z
  .object({
    first: ModelRunSchema,
    second: ModelRunSchema,
    commonAssets: z.number(),
    onlyInFirst: z.array(z.string()),
    onlyInSecond: z.array(z.string()),
    /** Principal angles in degrees, ascending (factor models on both sides), or null. */
    principalAnglesDegrees: z.array(z.number()).nullable(),
    note: z.string(),
    /** Annualised volatility of each portfolio the caller may read, under both versions (weights on covered holdings). */
    portfolios: z.array(
      z.object({
        id: z.number(),
        name: z.string(),
        kind: z.string(),
        holdings: z.number(),
        coveredFirst: z.number(),
        coveredSecond: z.number(),
        volFirst: z.number().nullable(),
        volSecond: z.number().nullable(),
        volChange: z.number().nullable(),
      }),
    ),
    assets: z.array(
      z.object({
        symbol: z.string(),
        communalityFirst: z.number().nullable(),
        communalitySecond: z.number().nullable(),
        communalityChange: z.number().nullable(),
        specificVolFirst: z.number(),
        specificVolSecond: z.number(),
        specificVolChange: z.number(),
      }),
    ),
  })
  .meta({ id: 'ModelComparison' });
export type ModelComparison = z.infer<typeof ModelComparisonSchema>;
