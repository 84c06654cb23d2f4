import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { AssetListDetail, AssetListSummary, CreateAssetListBody } from '@shared/schemas/assetLists';
import { api } from '../../lib/api';

export const assetListKeys = {
  all: ['asset-lists'] as const,
  list: () => [...assetListKeys.all, 'list'] as const,
};

/** GET /api/asset-lists (the saved lists a run's universe can use). */
export function useAssetLists() {
  return useQuery({ queryKey: assetListKeys.list(), queryFn: () => api.get<{ lists: AssetListSummary[] }>('/asset-lists').then((a) => a.lists), staleTime: 30_000 });
}

/** POST /api/asset-lists */
export function useCreateAssetList() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: CreateAssetListBody) => api.post<AssetListDetail>('/asset-lists', body),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: assetListKeys.list() }),
  });
}
