import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { Asset } from '@shared/schemas/assets';
import type { ModelComparison, ModelResults, ModelRun, ModelRunParametersInput } from '@shared/schemas/modelRuns';
import { api } from '../../lib/api';

export const modelKeys = {
  all: ['model-runs'] as const,
  list: () => [...modelKeys.all, 'list'] as const,
  run: (id: number) => [...modelKeys.all, 'run', id] as const,
  results: (id: number) => [...modelKeys.all, 'results', id] as const,
  loadings: (id: number, orientation: string) => [...modelKeys.all, 'loadings', id, orientation] as const,
  compare: (a: number, b: number) => [...modelKeys.all, 'compare', a, b] as const,
};

const active = (run: ModelRun) => run.status === 'queued' || run.status === 'running';

/** GET /api/model-runs: polls every second while any run is queued or running (the live progress bars). */
export function useModelRuns() {
  return useQuery({
    queryKey: modelKeys.list(),
    queryFn: () => api.get<{ runs: ModelRun[] }>('/model-runs').then((answer) => answer.runs),
    refetchInterval: (query) => (query.state.data?.some(active) ? 1000 : false),
  });
}

/** GET /api/model-runs?assetList=:id: the runs over one saved asset list (polls while any is queued or running). */
export function useModelRunsOverList(listId: number) {
  return useQuery({
    queryKey: [...modelKeys.list(), 'asset-list', listId] as const,
    queryFn: () => api.get<{ runs: ModelRun[] }>('/model-runs', { query: { assetList: listId, limit: 500 } }).then((answer) => answer.runs),
    refetchInterval: (query) => (query.state.data?.some(active) ? 1000 : false),
  });
}

/** GET /api/model-runs/:id: polls while the run is queued or running. */
export function useModelRun(id: number) {
  return useQuery({
    queryKey: modelKeys.run(id),
    queryFn: () => api.get<ModelRun>(`/model-runs/${id}`),
    refetchInterval: (query) => (query.state.data && active(query.state.data) ? 1000 : false),
  });
}

/** GET /api/model-runs/:id/results (only once the run succeeded). */
export function useModelResults(id: number, enabled: boolean) {
  return useQuery({ queryKey: modelKeys.results(id), queryFn: () => api.get<ModelResults>(`/model-runs/${id}/results`), enabled, staleTime: Infinity });
}

export type Loadings = { orientation: 'canonical' | 'varimax'; note: string; symbols: string[]; factors: number; loadings: number[][] };

/** GET /api/model-runs/:id/loadings?orientation= */
export function useModelLoadings(id: number, orientation: 'canonical' | 'varimax', enabled: boolean) {
  return useQuery({
    queryKey: modelKeys.loadings(id, orientation),
    queryFn: () => api.get<Loadings>(`/model-runs/${id}/loadings`, { query: { orientation } }),
    enabled,
    staleTime: Infinity,
  });
}

/** GET /api/model-runs/:id/compare?with= */
export function useCompareRuns(first: number | null, second: number | null) {
  return useQuery({
    queryKey: modelKeys.compare(first ?? 0, second ?? 0),
    queryFn: () => api.get<ModelComparison>(`/model-runs/${first}/compare`, { query: { with: second } }),
    enabled: first !== null && second !== null && first !== second,
  });
}

/** GET /api/assets (sectors and symbols for the universe picker). */
export function useAssetsForUniverse() {
  return useQuery({ queryKey: ['assets', 'list'], queryFn: () => api.get<{ assets: Asset[] }>('/assets').then((a) => a.assets), staleTime: 60_000 });
}

function useRunMutation<V>(fn: (v: V) => Promise<ModelRun>) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: fn,
    onSuccess: (run) => {
      queryClient.setQueryData(modelKeys.run(run.id), run);
      return queryClient.invalidateQueries({ queryKey: modelKeys.list() });
    },
  });
}

/** POST /api/model-runs */
export function useCreateRun() {
  return useRunMutation((body: ModelRunParametersInput) => api.post<ModelRun>('/model-runs', body));
}

/** POST /api/model-runs/:id/cancel */
export function useCancelRun() {
  return useRunMutation((id: number) => api.post<ModelRun>(`/model-runs/${id}/cancel`));
}

/** POST /api/model-runs/:id/approve */
export function useApproveRun() {
  return useRunMutation(({ id, comment }: { id: number; comment: string }) => api.post<ModelRun>(`/model-runs/${id}/approve`, { comment }));
}

/** POST /api/model-runs/:id/retire */
export function useRetireRun() {
  return useRunMutation(({ id, comment }: { id: number; comment: string }) => api.post<ModelRun>(`/model-runs/${id}/retire`, { comment }));
}
