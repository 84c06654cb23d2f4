import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { PublicUser, SignInBody, SignInResponse } from '@shared/schemas/auth';
import { api, ApiError } from '../../lib/api';

export const sessionKeys = {
  me: ['session', 'me'] as const,
};

/** The signed-in user, or null when there is no valid session (401). */
export function useSession() {
  return useQuery({
    queryKey: sessionKeys.me,
    queryFn: async (): Promise<PublicUser | null> => {
      try {
        return await api.get<PublicUser>('/auth/me');
      } catch (error) {
        if (error instanceof ApiError && error.status === 401) return null;
        throw error;
      }
    },
    staleTime: 5 * 60_000,
  });
}

export function useSignIn() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: SignInBody) => api.post<SignInResponse>('/auth/sign-in', body),
    onSuccess: (answer) => {
      // A new session: nothing cached for the previous user may leak into it.
      queryClient.clear();
      queryClient.setQueryData(sessionKeys.me, answer.user);
    },
  });
}

export function useSignOut() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: () => api.post<{ ok: true }>('/auth/sign-out'),
    onSettled: () => {
      queryClient.clear();
      queryClient.setQueryData(sessionKeys.me, null);
    },
  });
}
