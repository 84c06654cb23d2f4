import { z } from 'zod';

/** The four roles; the server enforces them on every route, the client only hides what a role cannot use. */
export const ROLES = ['admin', 'analyst', 'pm', 'compliance'] as const;
export const RoleSchema = z.enum(ROLES).meta({ id: 'Role', description: 'admin, analyst, pm (portfolio manager) or compliance' });
export type Role = z.infer<typeof RoleSchema>;

export const ROLE_LABELS: Record<Role, string> = {
  admin: 'Administrator',
  analyst: 'Risk analyst',
  pm: 'Portfolio manager',
  compliance: 'Compliance',
};

/** Every error the API returns has this shape; `issues` names the offending field or row. */
export const ApiErrorSchema = z
  .object({
    error: z.string(),
    issues: z
      .array(z.object({ path: z.string(), message: z.string() }))
      .optional(),
  })
  .meta({ id: 'ApiError' });
export type ApiError = z.infer<typeof ApiErrorSchema>;

export const IdParamsSchema = z.object({ id: z.string().regex(/^\d+$/, 'must be a whole number') });

/** A date as the API speaks it: ISO 8601 calendar date. */
export const IsoDateSchema = z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'must be an ISO date (YYYY-MM-DD)');

export const OkSchema = z.object({ ok: z.literal(true) }).meta({ id: 'Ok' });
