import { apiRouter } from '../http/route';
import { AuditActionListSchema, AuditFilterSchema, AuditPageSchema, AuditQuerySchema } from '../../shared/schemas/audit';
import { AUDIT_EXPORT_LIMIT, listAudit, listAuditActions, recordAudit, requestIp, writeAuditCsv } from '../services/auditService';

export function auditRoutes() {
  const api = apiRouter('/audit', 'Audit trail');

  api.route({
    method: 'get',
    path: '/',
    access: ['admin', 'compliance'],
    summary: 'Audit events, newest first, filtered and paged',
    description: 'Filters: actor (part of the e-mail), action, objectType, objectId, from and to (ISO date or date-time; a date `to` includes that day, UTC).',
    query: AuditQuerySchema,
    response: AuditPageSchema,
    handler: ({ query }) => listAudit(query),
  });

  api.route({
    method: 'get',
    path: '/actions',
    access: ['admin', 'compliance'],
    summary: 'Every action name recorded so far (for filters)',
    response: AuditActionListSchema,
    handler: async () => ({ items: await listAuditActions() }),
  });

  api.route({
    method: 'get',
    path: '/export.csv',
    access: ['admin', 'compliance'],
    summary: 'Export the filtered audit trail as CSV',
    description: `Same filters as the list; oldest first; at most ${AUDIT_EXPORT_LIMIT} rows. The export itself is audited.`,
    query: AuditFilterSchema,
    responseContentType: 'text/csv',
    handler: async ({ query, user, req, res }) => {
      await recordAudit({ actor: user, action: 'audit.exported', ip: requestIp(req), details: { filters: query } });
      res.status(200);
      res.setHeader('Content-Type', 'text/csv; charset=utf-8');
      res.setHeader('Content-Disposition', `attachment; filename="loadline-audit-${new Date().toISOString().slice(0, 10)}.csv"`);
      await writeAuditCsv(query, res);
      return undefined;
    },
  });

  return api;
}
