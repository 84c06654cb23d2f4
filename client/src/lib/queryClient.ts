import { QueryCache, QueryClient, MutationCache } from '@tanstack/react-query';
import { ApiError } from './api';
import { sessionKeys } from '../features/auth/api';

/**
 * One query client for the app. Data counts as fresh for 30 s; client errors (4xx) are not retried, other failures
 * once. A 401 anywhere means the session ended: clearing the session query sends the shell to the sign-in page.
 */
export function createQueryClient(): QueryClient {
  const onError = (error: unknown) => {
    if (error instanceof ApiError && error.status === 401) client.setQueryData(sessionKeys.me, null);
  };
  const client: QueryClient = new QueryClient({
    queryCache: new QueryCache({ onError }),
    mutationCache: new MutationCache({ onError }),
    defaultOptions: {
      queries: {
        staleTime: 30_000,
        refetchOnWindowFocus: false,
        retry: (failureCount, error) => !(error instanceof ApiError && error.isClientError) && failureCount < 1,
      },
      mutations: { retry: false },
    },
  });
  return client;
}
