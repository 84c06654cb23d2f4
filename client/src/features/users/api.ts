import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { InviteUserBody, UpdateUserBody, UserList, UserSummary } from '@shared/schemas/users';
import { api } from '../../lib/api';

export const userKeys = {
  all: ['users'] as const,
  list: () => [...userKeys.all, 'list'] as const,
};

/** GET /api/users */
export function useUsers() {
  return useQuery({ queryKey: userKeys.list(), queryFn: () => api.get<UserList>('/users').then((answer) => answer.items) });
}

/** POST /api/users: creates the user without a password and mails a one-time link. */
export function useInviteUser() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: InviteUserBody) => api.post<UserSummary>('/users', body),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: userKeys.all }),
  });
}

/** PATCH /api/users/:id: name, role, or active (false deactivates at once). */
export function useUpdateUser() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ id, changes }: { id: number; changes: UpdateUserBody }) => api.patch<UserSummary>(`/users/${id}`, changes),
    onSuccess: (updated) => {
      queryClient.setQueryData<UserSummary[]>(userKeys.list(), (users) => users?.map((user) => (user.id === updated.id ? updated : user)));
      return queryClient.invalidateQueries({ queryKey: userKeys.all });
    },
  });
}

/** POST /api/users/:id/invitation: mails a fresh invitation link (the older one stops working). */
export function useResendInvitation() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (id: number) => api.post<UserSummary>(`/users/${id}/invitation`),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: userKeys.all }),
  });
}
