import { keepPreviousData, useMutation, useQuery } from '@tanstack/react-query';
import type { AuditFilter, AuditPage } from '@shared/schemas/audit';
import { api, downloadFile } from '../../lib/api';

export type AuditListParams = AuditFilter & { page: number; pageSize: number };

export const auditKeys = {
  all: ['audit'] as const,
  list: (params: AuditListParams) => [...auditKeys.all, 'list', params] as const,
  actions: () => [...auditKeys.all, 'actions'] as const,
};

/** GET /api/audit: one page of events, newest first; the previous page stays on screen while the next loads. */
export function useAuditEvents(params: AuditListParams) {
  return useQuery({
    queryKey: auditKeys.list(params),
    queryFn: () => api.get<AuditPage>('/audit', { query: params }),
    placeholderData: keepPreviousData,
  });
}

/** GET /api/audit/actions: action names for the filter. */
export function useAuditActions() {
  return useQuery({ queryKey: auditKeys.actions(), queryFn: () => api.get<{ items: string[] }>('/audit/actions').then((answer) => answer.items) });
}

/** GET /api/audit/export.csv with the same filters (the whole filtered trail, not just the page). */
export function useExportAudit() {
  return useMutation({
    mutationFn: (filter: AuditFilter) => downloadFile('/audit/export.csv', `loadline-audit-${new Date().toISOString().slice(0, 10)}.csv`, filter),
  });
}
