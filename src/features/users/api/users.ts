import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { CreateUser, UpdateUser, UserRow } from '#shared/schemas/users';
import { apiRequest } from '#src/lib/api-client';

export type UserListFilters = Record<string, never>;

export const usersKeys = {
  all: ['users'] as const,
  lists: () => [...usersKeys.all, 'list'] as const,
  list: (filters: UserListFilters = {}) => [...usersKeys.lists(), filters] as const,
  details: () => [...usersKeys.all, 'detail'] as const,
  detail: (id: string) => [...usersKeys.details(), id] as const,
};

export const usersListQueryOptions = () =>
  queryOptions({
    queryKey: usersKeys.list(),
    queryFn: () => apiRequest<{ users: UserRow[] }>('/api/admin/users').then((body) => body.users),
  });

export function useUsers() {
  return useQuery(usersListQueryOptions());
}

/** Puts the server's fresh copy of one account into every cached list, then asks for the lists again. */
function useAccountChanged() {
  const queryClient = useQueryClient();
  return async (user: UserRow | null) => {
    if (user) {
      queryClient.setQueriesData<UserRow[]>({ queryKey: usersKeys.lists() }, (rows) =>
        rows?.map((row) => (row.id === user.id ? user : row)),
      );
      queryClient.setQueryData(usersKeys.detail(user.id), user);
    }
    await queryClient.invalidateQueries({ queryKey: usersKeys.lists() });
  };
}

export function useCreateUser() {
  const changed = useAccountChanged();
  return useMutation({
    mutationFn: (input: CreateUser) =>
      apiRequest<{ user: UserRow }>('/api/admin/users', { method: 'POST', body: input }).then((b) => b.user),
    onSuccess: () => changed(null),
  });
}

export function useUpdateUser() {
  const changed = useAccountChanged();
  return useMutation({
    mutationFn: ({ id, patch }: { id: string; patch: UpdateUser }) =>
      apiRequest<{ user: UserRow }>(`/api/admin/users/${encodeURIComponent(id)}`, {
        method: 'PATCH',
        body: patch,
      }).then((b) => b.user),
    onSuccess: (user) => changed(user),
  });
}

/** E-mails a single-use link; the account itself does not change until the person uses it. */
export function useSendPasswordLink() {
  return useMutation({
    mutationFn: (id: string) =>
      apiRequest<void>(`/api/admin/users/${encodeURIComponent(id)}/password-reset`, { method: 'POST' }),
  });
}

export function useUnlockUser() {
  const changed = useAccountChanged();
  return useMutation({
    mutationFn: (id: string) =>
      apiRequest<{ user: UserRow }>(`/api/admin/users/${encodeURIComponent(id)}/unlock`, {
        method: 'POST',
      }).then((b) => b.user),
    onSuccess: (user) => changed(user),
  });
}
