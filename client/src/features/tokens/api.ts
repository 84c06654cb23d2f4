import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { ApiTokenList, ApiTokenView, CreateApiTokenBody, CreatedApiToken } from '@shared/schemas/tokens';
import { api } from '../../lib/api';

export const tokenKeys = {
  all: ['tokens'] as const,
  mine: () => [...tokenKeys.all, 'mine'] as const,
};

/** GET /api/tokens: the signed-in user's own tokens. */
export function useMyTokens() {
  return useQuery({ queryKey: tokenKeys.mine(), queryFn: () => api.get<ApiTokenList>('/tokens').then((answer) => answer.items) });
}

/** POST /api/tokens: the answer carries the secret, once. */
export function useCreateToken() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: CreateApiTokenBody) => api.post<CreatedApiToken>('/tokens', body),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: tokenKeys.all }),
  });
}

/** DELETE /api/tokens/:id: revokes at once. */
export function useRevokeToken() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (id: number) => api.delete<ApiTokenView>(`/tokens/${id}`),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: tokenKeys.all }),
  });
}
