import { z } from 'zod';
import { IsoDateSchema } from './common';
import { EstimatorSchema } from './modelRuns';

/**
 * Portfolios, holdings and portfolio risk as the API speaks them.
 * Weights are fractions of portfolio value (0.05 = 5 %); stored weights sum to one.
 */

export const PORTFOLIO_KINDS = ['fund', 'benchmark'] as const;
export const PortfolioKindSchema = z.enum(PORTFOLIO_KINDS);
export const HOLDINGS_INPUT_MODES = ['weights', 'market-values'] as const;
export const HoldingsInputModeSchema = z.enum(HOLDINGS_INPUT_MODES);

const CurrencySchema = z
  .string()
  .trim()
  .regex(/^[A-Za-z]{3}$/, 'must be a three-letter currency code, e.g. USD')
  .transform((s) => s.toUpperCase());

export const PortfolioSummarySchema = z
  .object({
    id: z.number().int(),
    name: z.string(),
    kind: PortfolioKindSchema,
    description: z.string(),
    baseCurrency: z.string(),
    owner: z.object({ id: z.number().int(), name: z.string(), email: z.string() }),
    benchmark: z.object({ id: z.number().int(), name: z.string() }).nullable(),
    holdingsCount: z.number().int(),
    inputMode: HoldingsInputModeSchema,
    /** Whether the caller may edit it (owner or admin). */
    canEdit: z.boolean(),
    createdAt: z.string(),
    updatedAt: z.string(),
  })
  .meta({ id: 'PortfolioSummary' });
export type PortfolioSummary = z.infer<typeof PortfolioSummarySchema>;

export const HoldingSchema = z.object({
  symbol: z.string(),
  assetName: z.string().nullable(),
  weight: z.number(),
  marketValue: z.number().nullable(),
});
export type Holding = z.infer<typeof HoldingSchema>;

export const PortfolioDetailSchema = PortfolioSummarySchema.extend({
  holdings: z.array(HoldingSchema),
  totalMarketValue: z.number().nullable(),
}).meta({ id: 'PortfolioDetail' });
export type PortfolioDetail = z.infer<typeof PortfolioDetailSchema>;

export const PortfolioListSchema = z.object({ portfolios: z.array(PortfolioSummarySchema) }).meta({ id: 'PortfolioList' });

export const CreatePortfolioBodySchema = z
  .object({
    name: z.string().trim().min(1, 'a name is required').max(120, 'at most 120 characters'),
    kind: PortfolioKindSchema.default('fund'),
    description: z.string().max(2000, 'at most 2000 characters').default(''),
    baseCurrency: CurrencySchema.default('USD'),
    benchmarkPortfolioId: z.number().int().positive().nullable().default(null),
    /** Admins may create a portfolio for a PM; everyone else owns what they create. */
    ownerId: z.number().int().positive().optional(),
  })
  .meta({ id: 'CreatePortfolioBody' });
export type CreatePortfolioBody = z.input<typeof CreatePortfolioBodySchema>;

export const UpdatePortfolioBodySchema = z
  .object({
    name: z.string().trim().min(1, 'a name is required').max(120, 'at most 120 characters'),
    kind: PortfolioKindSchema,
    description: z.string().max(2000, 'at most 2000 characters'),
    baseCurrency: CurrencySchema,
    benchmarkPortfolioId: z.number().int().positive().nullable(),
  })
  .partial()
  .meta({ id: 'UpdatePortfolioBody' });
export type UpdatePortfolioBody = z.input<typeof UpdatePortfolioBodySchema>;

/** One holding row as entered: a weight, or a market value, by input mode. */
export const HoldingInputSchema = z.object({
  symbol: z.string().max(40, 'at most 40 characters'),
  weight: z.number().finite().nullable().optional(),
  marketValue: z.number().finite().nullable().optional(),
});
export type HoldingInput = z.infer<typeof HoldingInputSchema>;

/**
 * Replaces every holding. Weights must sum to the stated total (1 for fractions, 100 for percent) within
 * WEIGHT_SUM_TOLERANCE of that unit, and are then normalised to sum exactly to one; market values are divided by their
 * (positive) total.
 */
export const ReplaceHoldingsBodySchema = z
  .object({
    mode: HoldingsInputModeSchema,
    weightUnit: z.enum(['fraction', 'percent']).default('fraction'),
    holdings: z.array(HoldingInputSchema).max(5000, 'at most 5000 holdings'),
  })
  .meta({ id: 'ReplaceHoldingsBody' });
export type ReplaceHoldingsBody = z.input<typeof ReplaceHoldingsBodySchema>;

/** Relative tolerance on the stated weight total: 0.01 % of it (0.0001 in fractions, 0.01 in percent). */
export const WEIGHT_SUM_TOLERANCE = 1e-4;

// ---------------------------------------------------------------------------------------------------------------
// Risk

/** Contributors listed by default: the largest by |percent|; the rest are summed in `otherContributors`. */
export const DEFAULT_CONTRIBUTORS = 25;

export const RiskQuerySchema = z.object({
  model: z.string().regex(/^\d+$/, 'must be a model run id').optional(),
  horizon: z.coerce.number().int('must be a whole number of periods').min(1, 'at least 1 period').max(260, 'at most 260 periods').default(1),
  draws: z.coerce.number().int('must be a whole number').min(1000, 'at least 1000 draws').max(200_000, 'at most 200000 draws').default(10_000),
  seed: z.coerce.number().int('must be a whole number').min(0).max(2 ** 31 - 1).default(20261202),
  contributors: z
    .union([z.literal('all'), z.coerce.number().int('must be a whole number or "all"').min(1, 'at least 1').max(10_000, 'at most 10000')])
    .default(DEFAULT_CONTRIBUTORS)
    .meta({ description: `How many of the largest contributors to list (by |percent|), or "all"; the rest are summed in otherContributors. Default ${DEFAULT_CONTRIBUTORS}.` }),
  history: z
    .enum(['true', 'false'], { message: 'must be true or false' })
    .default('false')
    .meta({ description: 'Include the portfolio’s factor return history over the window (one point per date).' }),
});
export type RiskQuery = z.input<typeof RiskQuerySchema>;

export const WhatIfBodySchema = z
  .object({
    holdings: z
      .array(z.object({ symbol: z.string().max(40), weight: z.number().finite() }))
      .min(1, 'at least one holding')
      .max(5000, 'at most 5000 holdings'),
    model: z.number().int().positive().optional(),
    horizon: z.number().int().min(1).max(260).default(1),
    draws: z.number().int().min(1000).max(200_000).default(10_000),
    seed: z.number().int().min(0).max(2 ** 31 - 1).default(20261202),
    contributors: z.union([z.literal('all'), z.number().int().min(1).max(10_000)]).default(DEFAULT_CONTRIBUTORS),
    history: z.boolean().default(false),
  })
  .meta({ id: 'WhatIfBody' });
export type WhatIfBody = z.input<typeof WhatIfBodySchema>;


const ModelRefSchema = z.object({
  runId: z.number().int(),
  label: z.string(),
  method: EstimatorSchema,
  lifecycle: z.string(),
  approvedAt: z.string().nullable(),
  windowStart: IsoDateSchema,
  windowEnd: IsoDateSchema,
  observations: z.number().int(),
  assets: z.number().int(),
  factors: z.number().int(),
  periodsPerYear: z.number(),
});
export type ModelRef = z.infer<typeof ModelRefSchema>;

export const VolatilityRowSchema = z.object({
  estimator: EstimatorSchema,
  /** Where the figure comes from: the model used, or the window/universe it was computed on. */
  source: z.string(),
  runId: z.number().int().nullable(),
  volatility: z.number().nullable(), // per period
  annualisedVolatility: z.number().nullable(),
  ratioToSample: z.number().nullable(),
  /** Computed on the same window and universe as the model used for the page. */
  sameWindow: z.boolean(),
  coveredWeight: z.number().nullable(),
  note: z.string().nullable(),
});
export type VolatilityRow = z.infer<typeof VolatilityRowSchema>;

export const ContributorSchema = z.object({
  symbol: z.string(),
  assetName: z.string().nullable(),
  weight: z.number(),
  /** ∂σ/∂wᵢ, annualised. */
  marginal: z.number(),
  /** wᵢ ∂σ/∂wᵢ, annualised: sums to the annualised volatility. */
  contribution: z.number(),
  /** Share of variance, sums to 1 (100 %). */
  percent: z.number(),
});

const TailRowSchema = z.object({ confidence: z.number(), valueAtRisk: z.number(), expectedShortfall: z.number() });

export const PortfolioRiskSchema = z
  .object({
    portfolio: z.object({ id: z.number().int(), name: z.string() }),
    whatIf: z.boolean(),
    model: ModelRefSchema,
    weightSum: z.number(),
    holdings: z.number().int(),
    /** Holdings whose asset the model does not cover: left out of every figure (not renormalised). */
    uncovered: z.array(z.object({ symbol: z.string(), weight: z.number() })),
    coveredWeight: z.number(),
    volatilities: z.array(VolatilityRowSchema),
    /** N / T of the model's window and a plain note when it is high. */
    concentrationRatio: z.number(),
    sampleNote: z.string().nullable(),
    /** Set when holdings are in other currencies than the portfolio's base currency (exchange-rate risk left out). */
    currencyNote: z.string().nullable(),
    /** Set when no model was chosen and the latest approved one covers none of the holdings: which model stands in. */
    modelNote: z.string().nullable(),
    split: z
      .object({ factorVariance: z.number(), specificVariance: z.number(), factorShare: z.number(), specificShare: z.number() })
      .nullable(),
    annualisedVolatility: z.number(),
    volatility: z.number(),
    /** The largest contributors by |percent| (all of them when asked with contributors=all). */
    contributors: z.array(ContributorSchema),
    /** The covered holdings not listed in `contributors`, summed (null when every one is listed): the sums stay checkable. */
    otherContributors: z.object({ count: z.number().int(), weight: z.number(), contribution: z.number(), percent: z.number() }).nullable(),
    trackingError: z
      .object({
        benchmark: z.object({ id: z.number().int(), name: z.string() }),
        volatility: z.number(),
        annualisedVolatility: z.number(),
        uncoveredBenchmarkWeight: z.number(),
      })
      .nullable(),
    tailRisk: z.object({
      horizon: z.number().int(),
      periodsLabel: z.string(),
      parametric: z.array(TailRowSchema),
      monteCarlo: z.object({ draws: z.number().int(), seed: z.number().int(), simulatedVolatility: z.number(), levels: z.array(TailRowSchema) }),
    }),
    exposure: z
      .object({ factorVarianceShare: z.number(), exposureNorm: z.number(), exposures: z.array(z.number()), caveat: z.string() })
      .nullable(),
    /** Only when asked for (history=true) and the model is a factor model with stored scores; null otherwise. */
    factorReturnHistory: z.array(z.object({ date: IsoDateSchema, value: z.number() })).nullable(),
    assumptions: z.array(z.string()),
    elapsedMs: z.number(),
  })
  .meta({ id: 'PortfolioRisk' });
export type PortfolioRisk = z.infer<typeof PortfolioRiskSchema>;
