import type { Knex } from 'knex';
import type { Request } from 'express';
import { AuditEvent } from '../models/AuditEvent';

export interface AuditEntry {
  actor?: { id: number; email: string } | null;
  action: string;
  objectType?: string;
  objectId?: string | number;
  ip?: string | null;
  details?: Record<string, unknown>;
}

/** Appends one audit event; pass the transaction so the event commits or rolls back with the change it records. */
export async function recordAudit(entry: AuditEntry, trx?: Knex.Transaction): Promise<void> {
  await AuditEvent.query(trx).insert({
    actor_id: entry.actor?.id ?? null,
    actor_email: entry.actor?.email ?? null,
    action: entry.action,
    object_type: entry.objectType ?? null,
    object_id: entry.objectId === undefined ? null : String(entry.objectId),
    ip: entry.ip ?? null,
    details: entry.details ?? {},
  });
}

/** The caller's IP as Express sees it (honours TRUST_PROXY). */
export function requestIp(req: Request): string | null {
  return req.ip ?? req.socket.remoteAddress ?? null;
}
