import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { ImportOptionsInput, ImportProgress, ImportSummary } from '@shared/schemas/imports';
import type { AssetMetadataResultSchema } from '@shared/schemas/assets';
import type { z } from 'zod';
import { ApiError, apiUrl, api, downloadFile, type UploadProgress } from '../../lib/api';

export const importKeys = {
  all: ['imports'] as const,
  progress: (ref: string) => [...importKeys.all, 'progress', ref] as const,
};

/** An import answer the page shows whatever its status: 200/201 summary, 409 re-import, 422 problems. */
export type ImportAnswer = { status: number; error?: string; summary: ImportSummary };

function answerFrom(status: number, text: string): ImportAnswer {
  let body: (ImportSummary & { error?: string; summary?: ImportSummary; issues?: { path: string; message: string }[] }) | null = null;
  try {
    body = text ? JSON.parse(text) : null;
  } catch {
    body = null;
  }
  if (status >= 200 && status < 300 && body) return { status, summary: body };
  if ((status === 409 || status === 422) && body?.summary) return { status, error: body.error, summary: body.summary };
  throw new ApiError(status, body?.error ?? `The import failed (${status})`, body?.issues ?? []);
}

/**
 * POST /api/imports (multipart) with upload progress from XMLHttpRequest. `ref` lets the page poll processing
 * progress while the server reads the file.
 */
export function useUploadImport() {
  const client = useQueryClient();
  return useMutation({
    mutationFn: ({ file, options, mode, ref, onProgress }: { file: File; options: ImportOptionsInput; mode: 'preview' | 'commit'; ref: string; onProgress: (p: UploadProgress) => void }) =>
      new Promise<ImportAnswer>((resolve, reject) => {
        const form = new FormData();
        for (const [key, value] of Object.entries(options)) if (value !== undefined) form.append(key, String(value));
        form.append('mode', mode);
        form.append('file', file);
        const xhr = new XMLHttpRequest();
        xhr.open('POST', apiUrl('/imports', { ref }));
        xhr.withCredentials = true;
        xhr.setRequestHeader('Accept', 'application/json');
        xhr.upload.onprogress = (event) => onProgress({ loaded: event.loaded, total: event.total, fraction: event.lengthComputable && event.total ? event.loaded / event.total : 0 });
        xhr.onload = () => {
          try {
            resolve(answerFrom(xhr.status, xhr.responseText));
          } catch (error) {
            reject(error);
          }
        };
        xhr.onerror = () => reject(new ApiError(0, 'The upload was interrupted: the server cannot be reached.'));
        xhr.send(form);
      }),
    onSuccess: () => client.invalidateQueries({ queryKey: ['data-quality'] }),
  });
}

/** GET /api/imports/progress/:ref, polled while an upload is being processed. */
export function useImportProgress(ref: string | null, active: boolean) {
  return useQuery({
    queryKey: importKeys.progress(ref ?? ''),
    queryFn: () => api.get<ImportProgress>(`/imports/progress/${ref}`),
    enabled: Boolean(ref) && active,
    refetchInterval: active ? 300 : false,
  });
}

/** POST /api/imports/:id/commit: stores a previewed upload. */
export function useCommitImport() {
  const client = useQueryClient();
  return useMutation({
    mutationFn: async ({ id, confirmReimport }: { id: number; confirmReimport: boolean }) => {
      const response = await fetch(apiUrl(`/imports/${id}/commit`), {
        method: 'POST',
        credentials: 'include',
        headers: { 'Content-Type': 'application/json', Accept: 'application/json' },
        body: JSON.stringify({ confirmReimport }),
      });
      return answerFrom(response.status, await response.text());
    },
    onSuccess: () => client.invalidateQueries({ queryKey: ['data-quality'] }),
  });
}

/** GET /api/imports/:id/problems.csv: every problem of an upload. */
export function useDownloadProblems() {
  return useMutation({ mutationFn: (id: number) => downloadFile(`/imports/${id}/problems.csv`, `loadline-import-${id}-problems.csv`) });
}

/** POST /api/assets/metadata (multipart). */
export function useUploadAssetMetadata() {
  const client = useQueryClient();
  return useMutation({
    mutationFn: (file: File) => {
      const form = new FormData();
      form.append('file', file);
      return api.post<z.infer<typeof AssetMetadataResultSchema>>('/assets/metadata', form);
    },
    onSuccess: () => client.invalidateQueries({ queryKey: ['data-quality'] }),
  });
}
