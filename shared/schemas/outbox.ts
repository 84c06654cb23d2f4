import { z } from 'zod';

export const OutboxQuerySchema = z
  .object({
    to: z.string().trim().max(320).optional().meta({ description: 'part of a recipient address' }),
    page: z.coerce.number().int().min(1).default(1),
    pageSize: z.coerce.number().int().min(1).max(200).default(50),
  })
  .meta({ id: 'OutboxQuery' });
export type OutboxQuery = z.infer<typeof OutboxQuerySchema>;

/** A message the local mail sink received. `html` is untrusted: show `text`, or html only in a sandboxed frame. */
export const OutboxMessageSchema = z
  .object({
    id: z.number().int(),
    receivedAt: z.string(),
    from: z.string(),
    to: z.string(),
    subject: z.string(),
    text: z.string(),
    html: z.string().nullable(),
  })
  .meta({ id: 'OutboxMessage' });
export type OutboxMessageView = z.infer<typeof OutboxMessageSchema>;

export const OutboxPageSchema = z
  .object({ items: z.array(OutboxMessageSchema), total: z.number().int(), page: z.number().int(), pageSize: z.number().int() })
  .meta({ id: 'OutboxPage' });
export type OutboxPage = z.infer<typeof OutboxPageSchema>;
