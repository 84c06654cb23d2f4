import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { Coverage, DataQuality } from '@shared/schemas/dataQuality';
import type { ImportBatch, ImportBatchDetail } from '@shared/schemas/imports';
import type { Asset, AssetPatch } from '@shared/schemas/assets';
import { api } from '../../lib/api';

export const dataQualityKeys = {
  all: ['data-quality'] as const,
  assets: () => [...dataQualityKeys.all, 'assets'] as const,
  coverage: () => [...dataQualityKeys.all, 'coverage'] as const,
  batches: () => [...dataQualityKeys.all, 'batches'] as const,
  batch: (id: number) => [...dataQualityKeys.all, 'batch', id] as const,
  asset: (id: number) => [...dataQualityKeys.all, 'asset', id] as const,
};

/** GET /api/data-quality/assets: per-asset statistics of the stored series. */
export function useDataQuality() {
  return useQuery({ queryKey: dataQualityKeys.assets(), queryFn: () => api.get<DataQuality>('/data-quality/assets') });
}

/** GET /api/data-quality/coverage: the heatmap's asset × month shares. */
export function useCoverage() {
  return useQuery({ queryKey: dataQualityKeys.coverage(), queryFn: () => api.get<Coverage>('/data-quality/coverage') });
}

/** GET /api/imports: import history, newest first. */
export function useImportBatches() {
  return useQuery({ queryKey: dataQualityKeys.batches(), queryFn: () => api.get<{ batches: ImportBatch[] }>('/imports', { query: { limit: 200 } }).then((a) => a.batches) });
}

/** GET /api/imports/:id: one batch with its problems and revisions. */
export function useImportBatch(id: number | null) {
  return useQuery({ queryKey: dataQualityKeys.batch(id ?? 0), queryFn: () => api.get<ImportBatchDetail>(`/imports/${id}`), enabled: id !== null });
}

/** GET /api/assets/:id. */
export function useAsset(id: number | null) {
  return useQuery({ queryKey: dataQualityKeys.asset(id ?? 0), queryFn: () => api.get<Asset>(`/assets/${id}`), enabled: id !== null });
}

/** PATCH /api/assets/:id: edit an asset's metadata. */
export function useUpdateAsset() {
  const client = useQueryClient();
  return useMutation({
    mutationFn: ({ id, patch }: { id: number; patch: AssetPatch }) => api.patch<Asset>(`/assets/${id}`, patch),
    onSuccess: () => client.invalidateQueries({ queryKey: dataQualityKeys.all }),
  });
}
