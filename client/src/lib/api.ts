/**
 * The client's one way to talk to the API: same-origin fetch with the session cookie, JSON in and out, and an
 * ApiError that carries the status, the server's message and the `issues` naming offending fields or rows.
 */
export type ApiIssue = { path: string; message: string };

export class ApiError extends Error {
  constructor(
    public readonly status: number,
    message: string,
    public readonly issues: ApiIssue[] = [],
  ) {
    super(message);
    this.name = 'ApiError';
  }

  /** Client errors (4xx) will not go away on retry. */
  get isClientError(): boolean {
    return this.status >= 400 && this.status < 500;
  }
}

type Query = Record<string, string | number | boolean | null | undefined | (string | number)[]>;

/** Builds `/api/path?a=1&b=2`, leaving out empty values; arrays become repeated keys. */
export function apiUrl(path: string, query?: Query): string {
  const url = `/api${path.startsWith('/') ? path : `/${path}`}`;
  if (!query) return url;
  const params = new URLSearchParams();
  for (const [key, value] of Object.entries(query)) {
    if (value === undefined || value === null || value === '') continue;
    if (Array.isArray(value)) value.forEach((v) => params.append(key, String(v)));
    else params.append(key, String(value));
  }
  const text = params.toString();
  return text ? `${url}?${text}` : url;
}

async function errorFrom(response: Response): Promise<ApiError> {
  let message = response.statusText || `Request failed (${response.status})`;
  let issues: ApiIssue[] = [];
  try {
    const body = (await response.json()) as { error?: string; issues?: ApiIssue[] };
    if (body.error) message = body.error;
    if (Array.isArray(body.issues)) issues = body.issues;
  } catch {
    // Not JSON (a proxy error page, say): keep the status text.
  }
  return new ApiError(response.status, message, issues);
}

export type RequestOptions = { query?: Query; body?: unknown; signal?: AbortSignal; headers?: Record<string, string> };

export async function apiRequest<T>(method: string, path: string, options: RequestOptions = {}): Promise<T> {
  const headers: Record<string, string> = { Accept: 'application/json', ...options.headers };
  let body: BodyInit | undefined;
  if (options.body instanceof FormData) body = options.body;
  else if (options.body !== undefined) {
    headers['Content-Type'] = 'application/json';
    body = JSON.stringify(options.body);
  }
  let response: Response;
  try {
    response = await fetch(apiUrl(path, options.query), { method, headers, body, credentials: 'include', signal: options.signal });
  } catch (error) {
    if ((error as Error).name === 'AbortError') throw error;
    throw new ApiError(0, 'The server cannot be reached. Check your connection and try again.');
  }
  if (!response.ok) throw await errorFrom(response);
  if (response.status === 204) return undefined as T;
  const type = response.headers.get('Content-Type') ?? '';
  return (type.includes('application/json') ? await response.json() : await response.text()) as T;
}

export const api = {
  get: <T>(path: string, options?: Omit<RequestOptions, 'body'>) => apiRequest<T>('GET', path, options),
  post: <T>(path: string, body?: unknown, options?: RequestOptions) => apiRequest<T>('POST', path, { ...options, body }),
  put: <T>(path: string, body?: unknown, options?: RequestOptions) => apiRequest<T>('PUT', path, { ...options, body }),
  patch: <T>(path: string, body?: unknown, options?: RequestOptions) => apiRequest<T>('PATCH', path, { ...options, body }),
  delete: <T>(path: string, options?: RequestOptions) => apiRequest<T>('DELETE', path, options),
};

/** Downloads a CSV (or any file) the API produces, keeping the session cookie; the file name comes from the server when it sends one. */
export async function downloadFile(path: string, fallbackName: string, query?: Query): Promise<void> {
  const response = await fetch(apiUrl(path, query), { credentials: 'include', headers: { Accept: 'text/csv, */*' } });
  if (!response.ok) throw await errorFrom(response);
  const disposition = response.headers.get('Content-Disposition') ?? '';
  const match = /filename\*?=(?:UTF-8'')?"?([^";]+)"?/i.exec(disposition);
  const name = match ? decodeURIComponent(match[1]) : fallbackName;
  saveBlob(await response.blob(), name);
}

export function saveBlob(blob: Blob, name: string): void {
  const href = URL.createObjectURL(blob);
  const link = document.createElement('a');
  link.href = href;
  link.download = name;
  document.body.appendChild(link);
  link.click();
  link.remove();
  setTimeout(() => URL.revokeObjectURL(href), 1000);
}

export type UploadProgress = { loaded: number; total: number; fraction: number };

/**
 * Multipart upload with progress (fetch has no upload progress; XMLHttpRequest does). Resolves with the parsed JSON
 * answer, rejects with ApiError; aborting `signal` cancels the request (the server then discards the partial upload).
 * `answer(status, text)` replaces the default reading when some error statuses carry a useful body (e.g. a 422 preview).
 */
export function uploadWithProgress<T>(
  path: string,
  form: FormData,
  options: {
    method?: 'POST' | 'PUT';
    query?: Query;
    onProgress?: (progress: UploadProgress) => void;
    signal?: AbortSignal;
    answer?: (status: number, text: string) => T;
  } = {},
): Promise<T> {
  return new Promise<T>((resolve, reject) => {
    const xhr = new XMLHttpRequest();
    xhr.open(options.method ?? 'POST', apiUrl(path, options.query));
    xhr.withCredentials = true;
    xhr.setRequestHeader('Accept', 'application/json');
    xhr.upload.onprogress = (event) => {
      if (!options.onProgress) return;
      const total = event.lengthComputable ? event.total : 0;
      options.onProgress({ loaded: event.loaded, total, fraction: total ? event.loaded / total : 0 });
    };
    xhr.onload = () => {
      if (options.answer) {
        try {
          resolve(options.answer(xhr.status, xhr.responseText));
        } catch (error) {
          reject(error);
        }
        return;
      }
      let body: { error?: string; issues?: ApiIssue[] } | null = null;
      try {
        body = xhr.responseText ? JSON.parse(xhr.responseText) : null;
      } catch {
        body = null;
      }
      if (xhr.status >= 200 && xhr.status < 300) resolve(body as T);
      else reject(new ApiError(xhr.status, body?.error ?? (xhr.statusText || `Upload failed (${xhr.status})`), body?.issues ?? []));
    };
    xhr.onerror = () => reject(new ApiError(0, 'The upload was interrupted: the server cannot be reached.'));
    xhr.onabort = () => reject(new DOMException('The upload was cancelled', 'AbortError'));
    if (options.signal) {
      if (options.signal.aborted) return xhr.abort();
      options.signal.addEventListener('abort', () => xhr.abort(), { once: true });
    }
    xhr.send(form);
  });
}

/** A readable message for anything a query or mutation threw. */
export function errorMessage(error: unknown): string {
  if (error instanceof ApiError) return error.message;
  if (error instanceof Error) return error.message;
  return 'Something went wrong';
}
