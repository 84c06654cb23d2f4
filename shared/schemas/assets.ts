import { z } from 'zod';

export const AssetSchema = z
  .object({
    id: z.number().int(),
    symbol: z.string(),
    name: z.string(),
    sector: z.string().nullable(),
    country: z.string().nullable(),
    currency: z.string().nullable(),
    assetClass: z.string().nullable(),
    lastBatchId: z.number().int().nullable(),
  })
  .meta({ id: 'Asset' });
export type Asset = z.infer<typeof AssetSchema>;

export const AssetListSchema = z.object({ assets: z.array(AssetSchema) }).meta({ id: 'AssetList' });

const optionalText = (max: number) => z.string().trim().max(max).nullable().optional();

/** Editable metadata of an asset (the symbol stays: it is what return files refer to). */
export const AssetPatchSchema = z
  .object({
    name: z.string().trim().min(1, 'must not be empty').max(200).optional(),
    sector: optionalText(100),
    country: z.string().trim().regex(/^[A-Z]{2}$/, 'must be a two-letter ISO 3166 country code').nullable().optional(),
    currency: z.string().trim().regex(/^[A-Z]{3}$/, 'must be a three-letter ISO 4217 currency code').nullable().optional(),
    assetClass: optionalText(60),
  })
  .strict()
  .meta({ id: 'AssetPatch' });
export type AssetPatch = z.infer<typeof AssetPatchSchema>;

export const AssetMetadataUploadSchema = z
  .object({ file: z.string().optional().meta({ format: 'binary', description: 'CSV with a header: symbol, and any of name, sector, country, currency, asset_class (required)' }) })
  .meta({ id: 'AssetMetadataUpload' });

export const AssetMetadataResultSchema = z
  .object({ batchId: z.number().int(), rowsRead: z.number().int(), created: z.number().int(), updated: z.number().int() })
  .meta({ id: 'AssetMetadataResult' });

export const ReturnsQuerySchema = z.object({
  from: z.string().regex(/^\d{4}-\d{2}-\d{2}$/).optional(),
  to: z.string().regex(/^\d{4}-\d{2}-\d{2}$/).optional(),
  kind: z.enum(['simple', 'log']).default('simple').describe('simple as stored, or log = ln(1 + r)'),
});

export const ReturnSeriesSchema = z
  .object({
    symbol: z.string(),
    kind: z.enum(['simple', 'log']),
    frequency: z.string().nullable(),
    observations: z.array(z.object({ date: z.string(), value: z.number() })),
  })
  .meta({ id: 'ReturnSeries' });

export const SymbolParamsSchema = z.object({ symbol: z.string().min(1).max(40) });
