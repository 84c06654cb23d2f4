import type { Knex } from 'knex';
import type { Request } from 'express';
import type { Writable } from 'node:stream';
import { finished } from 'node:stream/promises';
import { stringify } from 'csv-stringify';
import { AuditEvent } from '../models/AuditEvent';
import { containsPattern } from '../db/like';
import type { AuditFilter, AuditQuery, AuditPage, AuditEventView } from '../../shared/schemas/audit';

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

// --- reading the trail (admin and compliance) -------------------------------------------------

/** The ISO bound of a filter: a bare date `to` means the end of that day (UTC). */
function bound(value: string, end: boolean): Date {
  if (/^\d{4}-\d{2}-\d{2}$/.test(value)) {
    const day = new Date(`${value}T00:00:00Z`);
    return end ? new Date(day.getTime() + 86_400_000) : day;
  }
  return new Date(value);
}

function filtered(filter: AuditFilter) {
  const query = AuditEvent.query();
  if (filter.actor) query.whereRaw(`actor_email ILIKE ? ESCAPE '\\'`, [containsPattern(filter.actor)]);
  if (filter.action) query.where('action', filter.action);
  if (filter.objectType) query.where('object_type', filter.objectType);
  if (filter.objectId) query.where('object_id', filter.objectId);
  if (filter.from) query.where('at', '>=', bound(filter.from, false));
  if (filter.to) query.where('at', /^\d{4}-\d{2}-\d{2}$/.test(filter.to) ? '<' : '<=', bound(filter.to, true));
  return query;
}

export function auditView(event: AuditEvent): AuditEventView {
  return {
    id: Number(event.id),
    at: new Date(event.at).toISOString(),
    actorId: event.actor_id,
    actorEmail: event.actor_email,
    action: event.action,
    objectType: event.object_type,
    objectId: event.object_id,
    ip: event.ip,
    details: event.details ?? {},
  };
}

/** Newest first, one page at a time. */
export async function listAudit(query: AuditQuery): Promise<AuditPage> {
  const [rows, countRow] = await Promise.all([
    filtered(query).orderBy([{ column: 'at', order: 'desc' }, { column: 'id', order: 'desc' }]).limit(query.pageSize).offset((query.page - 1) * query.pageSize),
    filtered(query).count({ count: '*' }).first() as unknown as Promise<{ count: number }>,
  ]);
  return { items: rows.map(auditView), total: Number(countRow?.count ?? 0), page: query.page, pageSize: query.pageSize };
}

export async function listAuditActions(): Promise<string[]> {
  const rows = await AuditEvent.query().distinct('action').orderBy('action');
  return rows.map((r) => r.action);
}

/** At most this many rows per CSV export (narrow the filters for more). */
export const AUDIT_EXPORT_LIMIT = 100_000;

/** Text that a spreadsheet would run as a formula gets a leading apostrophe (OWASP's CSV-injection advice). */
function spreadsheetSafe(cell: string | number): string | number {
  return typeof cell === 'string' && /^[=+\-@\t\r]/.test(cell) ? `'${cell}` : cell;
}

/** Streams the filtered trail as CSV, oldest first, in batches so memory stays flat. */
export async function writeAuditCsv(filter: AuditFilter, out: Writable): Promise<number> {
  const csv = stringify({ header: true, columns: ['id', 'at', 'actor_id', 'actor_email', 'action', 'object_type', 'object_id', 'ip', 'details'] });
  csv.pipe(out);
  let written = 0;
  let afterId = 0;
  const batch = 2000;
  while (written < AUDIT_EXPORT_LIMIT) {
    const rows = await filtered(filter).where('id', '>', afterId).orderBy('id').limit(Math.min(batch, AUDIT_EXPORT_LIMIT - written));
    for (const row of rows) {
      const view = auditView(row);
      const cells = [view.id, view.at, view.actorId ?? '', view.actorEmail ?? '', view.action, view.objectType ?? '', view.objectId ?? '', view.ip ?? '', JSON.stringify(view.details)];
      const ok = csv.write(cells.map(spreadsheetSafe));
      if (!ok) await new Promise((resolve) => csv.once('drain', resolve));
    }
    written += rows.length;
    if (rows.length < batch) break;
    afterId = Number(rows[rows.length - 1].id);
  }
  csv.end();
  await finished(out);
  return written;
}
