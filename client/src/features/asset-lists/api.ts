import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { AssetListDetail, AssetListSummary, CreateAssetListBody } from '@shared/schemas/assetLists';
import { api } from '../../lib/api';

export const assetListKeys = {
  all: ['asset-lists'] as const,
  list: () => [...assetListKeys.all, 'list'] as const,
  detail: (id: number) => [...assetListKeys.all, 'detail', id] as const,
};

/** GET /api/asset-lists (the saved lists a run's universe can use). */
export function useAssetLists() {
  return useQuery({ queryKey: assetListKeys.list(), queryFn: () => api.get<{ lists: AssetListSummary[] }>('/asset-lists').then((a) => a.lists), staleTime: 30_000 });
}

/** GET /api/asset-lists/:id: one list with its assets in the order entered (lists are never edited, so it stays fresh). */
export function useAssetList(id: number | null) {
  return useQuery({
    queryKey: assetListKeys.detail(id ?? 0),
    queryFn: () => api.get<AssetListDetail>(`/asset-lists/${id}`),
    enabled: id !== null,
    staleTime: Infinity,
  });
}

/** POST /api/asset-lists */
export function useCreateAssetList() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: CreateAssetListBody) => api.post<AssetListDetail>('/asset-lists', body),
    onSuccess: (saved) => {
      queryClient.setQueryData(assetListKeys.detail(saved.id), saved);
      return queryClient.invalidateQueries({ queryKey: assetListKeys.list() });
    },
  });
}

/** DELETE /api/asset-lists/:id (its owner, or an admin; the server checks). */
export function useDeleteAssetList() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (id: number) => api.delete<{ ok: true }>(`/asset-lists/${id}`),
    onSuccess: (_answer, id) => {
      queryClient.removeQueries({ queryKey: assetListKeys.detail(id) });
      // Not awaited: the page clears its selection in the caller's onSuccess before the refetched list drops the row
      // (awaiting would unmount the open panel first, and TanStack skips callbacks of an unmounted caller).
      void queryClient.invalidateQueries({ queryKey: assetListKeys.list() });
    },
  });
}
