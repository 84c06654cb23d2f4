import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { PublicUser, SignInBody, SignInResponse } from '@shared/schemas/auth';
import type { ChangePasswordBody, PasswordLinkInfo, PasswordResetRequestBody, SetPasswordBody } from '@shared/schemas/users';
import { api, ApiError } from '../../lib/api';

export const sessionKeys = {
  me: ['session', 'me'] as const,
  passwordLink: ['session', 'password-link'] as const,
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

/** POST /api/auth/password-reset: answers 202 whether or not the address exists (it never tells). */
export function useRequestPasswordReset() {
  return useMutation({ mutationFn: (body: PasswordResetRequestBody) => api.post<{ ok: true }>('/auth/password-reset', body) });
}

/** POST /api/auth/password-link: who the link is for and until when (400 when used, replaced or expired). */
export function usePasswordLink(token: string | null) {
  return useQuery({
    queryKey: [...sessionKeys.passwordLink, token] as const,
    queryFn: () => api.post<PasswordLinkInfo>('/auth/password-link', { token }),
    enabled: !!token,
    staleTime: Infinity,
  });
}

/** POST /api/auth/set-password: uses the link once; earlier sessions of that user end. */
export function useSetPassword() {
  return useMutation({ mutationFn: (body: SetPasswordBody) => api.post<{ ok: true; email: string }>('/auth/set-password', body) });
}

/** POST /api/auth/password: changes your own password; other sessions end, this one gets a fresh cookie. */
export function useChangePassword() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: ChangePasswordBody) => api.post<SignInResponse>('/auth/password', body),
    onSuccess: (answer) => queryClient.setQueryData(sessionKeys.me, answer.user),
  });
}
