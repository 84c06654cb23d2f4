import { z } from 'zod';

/** Saved asset lists: named sets of assets used as a model run's universe ({ kind: 'list', listId }). */

export const CreateAssetListBodySchema = z
  .object({
    name: z.string().trim().min(1, 'give the list a name').max(80, 'at most 80 characters'),
    description: z.string().trim().max(500, 'at most 500 characters').default(''),
    /** Symbols in the order entered; each must be a stored asset and appear once. */
    symbols: z.array(z.string().trim().min(1, 'empty symbol')).min(2, 'list at least two symbols').max(5000, 'at most 5000 symbols'),
  })
  .meta({ id: 'CreateAssetList' });
export type CreateAssetListBody = z.input<typeof CreateAssetListBodySchema>;

export const AssetListSummarySchema = z
  .object({
    id: z.number().int(),
    name: z.string(),
    description: z.string(),
    owner: z.object({ id: z.number().int(), name: z.string(), email: z.string() }),
    size: z.number().int(),
    /** Whether the caller may delete it (its owner, or an admin). */
    canDelete: z.boolean(),
    createdAt: z.string(),
  })
  .meta({ id: 'AssetListSummary' });
export type AssetListSummary = z.infer<typeof AssetListSummarySchema>;

export const AssetListDetailSchema = AssetListSummarySchema.extend({
  assets: z.array(z.object({ id: z.number().int(), symbol: z.string(), name: z.string(), sector: z.string().nullable() })),
}).meta({ id: 'AssetListDetail' });
export type AssetListDetail = z.infer<typeof AssetListDetailSchema>;

export const AssetListListSchema = z.object({ lists: z.array(AssetListSummarySchema) }).meta({ id: 'AssetListList' });
export type AssetListList = z.infer<typeof AssetListListSchema>;
