import { z } from 'zod';

const DateOrDateTimeSchema = z
  .string()
  .refine((v) => /^\d{4}-\d{2}-\d{2}(T[\d:.]+(Z|[+-]\d{2}:?\d{2})?)?$/.test(v) && !Number.isNaN(Date.parse(v)), 'must be an ISO date (YYYY-MM-DD) or date-time');

/** Filters shared by the audit list and its CSV export. `to` as a date includes that whole day (UTC). */
export const AuditFilterSchema = z.object({
  actor: z.string().trim().max(320).optional().meta({ description: 'part of the actor e-mail' }),
  action: z.string().trim().max(100).optional().meta({ description: 'exact action, e.g. user.invited' }),
  objectType: z.string().trim().max(100).optional(),
  objectId: z.string().trim().max(100).optional(),
  from: DateOrDateTimeSchema.optional(),
  to: DateOrDateTimeSchema.optional(),
});
export type AuditFilter = z.infer<typeof AuditFilterSchema>;

export const AuditQuerySchema = AuditFilterSchema.extend({
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(500).default(50),
}).meta({ id: 'AuditQuery' });
export type AuditQuery = z.infer<typeof AuditQuerySchema>;

export const AuditEventSchema = z
  .object({
    id: z.number().int(),
    at: z.string(),
    actorId: z.number().int().nullable(),
    actorEmail: z.string().nullable(),
    action: z.string(),
    objectType: z.string().nullable(),
    objectId: z.string().nullable(),
    ip: z.string().nullable(),
    details: z.record(z.string(), z.unknown()),
  })
  .meta({ id: 'AuditEvent' });
export type AuditEventView = z.infer<typeof AuditEventSchema>;

export const AuditPageSchema = z
  .object({ items: z.array(AuditEventSchema), total: z.number().int(), page: z.number().int(), pageSize: z.number().int() })
  .meta({ id: 'AuditPage' });
export type AuditPage = z.infer<typeof AuditPageSchema>;

export const AuditActionListSchema = z.object({ items: z.array(z.string()) }).meta({ id: 'AuditActionList' });
