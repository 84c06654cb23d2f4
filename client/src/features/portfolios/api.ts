import { keepPreviousData, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type {
  CreatePortfolioBody,
  PortfolioDetail,
  PortfolioRisk,
  PortfolioSummary,
  ReplaceHoldingsBody,
  UpdatePortfolioBody,
} from '@shared/schemas/portfolios';
import { api } from '../../lib/api';

export const portfolioKeys = {
  all: ['portfolios'] as const,
  list: () => [...portfolioKeys.all, 'list'] as const,
  detail: (id: number) => [...portfolioKeys.all, 'detail', id] as const,
  risk: (id: number, params: RiskParams) => [...portfolioKeys.all, 'risk', id, params] as const,
  whatIf: (id: number, params: RiskParams, weights: WhatIfWeight[]) => [...portfolioKeys.all, 'what-if', id, params, weights] as const,
  approvedModels: () => ['model-runs', 'approved', 'for-portfolios'] as const,
};

/** `contributors`: how many of the largest to list (the rest are summed by the server); `history`: include the factor return history. */
export type RiskParams = { model?: number; horizon: number; draws: number; seed: number; contributors?: number | 'all'; history?: boolean };
export type WhatIfWeight = { symbol: string; weight: number };

export type ApprovedModelHeader = {
  runId: number;
  label: string;
  estimator: 'fa' | 'ppca' | 'sample' | 'ledoit-wolf';
  approvedAt: string | null;
  firstDate: string;
  lastDate: string;
  assets: number;
  observations: number;
  factors: number;
};

/** GET /api/portfolios: the portfolios the caller may read. */
export function usePortfolios() {
  return useQuery({ queryKey: portfolioKeys.list(), queryFn: () => api.get<{ portfolios: PortfolioSummary[] }>('/portfolios').then((a) => a.portfolios) });
}

/** GET /api/portfolios/:id: one portfolio with its holdings. */
export function usePortfolio(id: number) {
  return useQuery({ queryKey: portfolioKeys.detail(id), queryFn: () => api.get<PortfolioDetail>(`/portfolios/${id}`), enabled: id > 0 });
}

/** POST /api/portfolios. */
export function useCreatePortfolio() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: CreatePortfolioBody) => api.post<PortfolioDetail>('/portfolios', body),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: portfolioKeys.all }),
  });
}

/** PATCH /api/portfolios/:id. */
export function useUpdatePortfolio(id: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: UpdatePortfolioBody) => api.patch<PortfolioDetail>(`/portfolios/${id}`, body),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: portfolioKeys.all }),
  });
}

/** DELETE /api/portfolios/:id. */
export function useDeletePortfolio() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (id: number) => api.delete<{ ok: true }>(`/portfolios/${id}`),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: portfolioKeys.all }),
  });
}

/** PUT /api/portfolios/:id/holdings: replaces every holding (validated, normalised on save). */
export function useReplaceHoldings(id: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: ReplaceHoldingsBody) => api.put<PortfolioDetail>(`/portfolios/${id}/holdings`, body),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: portfolioKeys.all }),
  });
}

/** POST /api/portfolios/:id/holdings/csv: replaces every holding from a CSV file. */
export function useUploadHoldingsCsv(id: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ file, weightUnit }: { file: File; weightUnit: 'fraction' | 'percent' }) => {
      const form = new FormData();
      form.append('weightUnit', weightUnit);
      form.append('file', file);
      return api.post<PortfolioDetail>(`/portfolios/${id}/holdings/csv`, form);
    },
    onSuccess: () => queryClient.invalidateQueries({ queryKey: portfolioKeys.all }),
  });
}

/** GET /api/portfolios/:id/risk: the saved portfolio's risk under a model (default: latest approved). */
export function usePortfolioRisk(id: number, params: RiskParams, enabled = true) {
  return useQuery({
    queryKey: portfolioKeys.risk(id, params),
    queryFn: ({ signal }) => api.get<PortfolioRisk>(`/portfolios/${id}/risk`, { query: { ...params }, signal }),
    enabled: enabled && id > 0,
    placeholderData: keepPreviousData,
    retry: (count, error) => !(error as { isClientError?: boolean }).isClientError && count < 2,
  });
}

/** POST /api/portfolios/:id/risk/what-if: risk of edited weights, nothing saved. Pass null weights to stay idle. */
export function useWhatIfRisk(id: number, params: RiskParams, weights: WhatIfWeight[] | null) {
  return useQuery({
    queryKey: portfolioKeys.whatIf(id, params, weights ?? []),
    queryFn: ({ signal }) => api.post<PortfolioRisk>(`/portfolios/${id}/risk/what-if`, { holdings: weights, ...params }, { signal }),
    enabled: id > 0 && weights !== null && weights.length > 0,
    placeholderData: keepPreviousData,
    retry: false,
  });
}

/** GET /api/model-runs/approved: the model versions a risk page may use. */
export function useApprovedModels() {
  return useQuery({
    queryKey: portfolioKeys.approvedModels(),
    queryFn: () => api.get<{ models: ApprovedModelHeader[] }>('/model-runs/approved').then((a) => a.models),
    staleTime: 60_000,
  });
}
