import { keepPreviousData, useQuery } from '@tanstack/react-query';
import type { OutboxMessageView, OutboxPage } from '@shared/schemas/outbox';
import { api } from '../../lib/api';

export type OutboxListParams = { to?: string; page: number; pageSize: number };

export const outboxKeys = {
  all: ['outbox'] as const,
  list: (params: OutboxListParams) => [...outboxKeys.all, 'list', params] as const,
  message: (id: number) => [...outboxKeys.all, 'message', id] as const,
};

/** GET /api/outbox: received mail, newest first. Refreshes every 10 s so a mail just sent shows up by itself. */
export function useOutbox(params: OutboxListParams) {
  return useQuery({
    queryKey: outboxKeys.list(params),
    queryFn: () => api.get<OutboxPage>('/outbox', { query: params }),
    placeholderData: keepPreviousData,
    staleTime: 5_000,
    refetchInterval: 10_000,
  });
}

/** GET /api/outbox/:id */
export function useOutboxMessage(id: number | null) {
  return useQuery({
    queryKey: outboxKeys.message(id ?? 0),
    queryFn: () => api.get<OutboxMessageView>(`/outbox/${id}`),
    enabled: id !== null,
    staleTime: Infinity, // a received message never changes
  });
}
