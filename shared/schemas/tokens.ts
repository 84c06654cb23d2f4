import { z } from 'zod';

export const ApiTokenStatusSchema = z.enum(['active', 'expired', 'revoked']).meta({ id: 'ApiTokenStatus' });

/** A named API token as listed: never the secret nor its hash. */
export const ApiTokenSchema = z
  .object({
    id: z.number().int(),
    name: z.string(),
    prefix: z.string().meta({ description: 'first characters of the secret, to tell tokens apart' }),
    status: ApiTokenStatusSchema,
    createdAt: z.string(),
    lastUsedAt: z.string().nullable(),
    expiresAt: z.string().nullable(),
    revokedAt: z.string().nullable(),
  })
  .meta({ id: 'ApiToken' });
export type ApiTokenView = z.infer<typeof ApiTokenSchema>;

export const ApiTokenListSchema = z.object({ items: z.array(ApiTokenSchema) }).meta({ id: 'ApiTokenList' });
export type ApiTokenList = z.infer<typeof ApiTokenListSchema>;

export const CreateApiTokenBodySchema = z
  .object({
    name: z.string().trim().min(1, 'name is required').max(100),
    expiresInDays: z.number().int().min(1).max(3650).nullable().optional().meta({ description: 'omit or null for no expiry' }),
  })
  .meta({ id: 'CreateApiTokenBody' });
export type CreateApiTokenBody = z.infer<typeof CreateApiTokenBodySchema>;

export const CreatedApiTokenSchema = z
  .object({
    token: ApiTokenSchema,
    secret: z.string().meta({ description: 'shown once: send it as `Authorization: Bearer <secret>`' }),
  })
  .meta({ id: 'CreatedApiToken' });
export type CreatedApiToken = z.infer<typeof CreatedApiTokenSchema>;
