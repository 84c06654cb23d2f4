import { z } from 'zod';

export const AssetQualitySchema = z
  .object({
    assetId: z.number().int(),
    symbol: z.string(),
    name: z.string(),
    sector: z.string().nullable(),
    firstDate: z.string().nullable(),
    lastDate: z.string().nullable(),
    observations: z.number().int(),
    missingShare: z.number().nullable().describe('Share of expected periods between first and last date with no value'),
    mean: z.number().nullable(),
    annualisedVolatility: z.number().nullable().describe('Standard deviation × √(periods per year): square-root-of-time assumption'),
    min: z.number().nullable(),
    max: z.number().nullable(),
    outliers: z.number().int().describe('Values with robust z-score |0.6745 (x − median) / MAD| > 3.5'),
    lastImportId: z.number().int().nullable(),
    lastImportAt: z.string().nullable(),
  })
  .meta({ id: 'AssetQuality' });
export type AssetQuality = z.infer<typeof AssetQualitySchema>;

export const DataQualitySchema = z
  .object({ frequency: z.string().nullable(), periodsPerYear: z.number(), assets: z.array(AssetQualitySchema) })
  .meta({ id: 'DataQuality' });
export type DataQuality = z.infer<typeof DataQualitySchema>;

export const CoverageSchema = z
  .object({
    months: z.array(z.string()).describe('YYYY-MM'),
    assets: z.array(z.object({ symbol: z.string(), sector: z.string().nullable() })),
    /** cells[asset][month]: share of the month's dates (in the stored calendar) with a value, 0–1. */
    cells: z.array(z.array(z.number())),
  })
  .meta({ id: 'Coverage' });
export type Coverage = z.infer<typeof CoverageSchema>;
