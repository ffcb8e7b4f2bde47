import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { BadgeSignIn, MeResponse, PasswordSignIn } from '#shared/schemas/auth';
import { apiRequest } from '#src/lib/api-client';
import { authKeys } from './auth-keys';

/**
 * Signing in or out changes everything the person may see, so the whole cache is dropped and the new
 * identity is written in its place.
 */
export function usePasswordSignIn() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (input: PasswordSignIn) =>
      apiRequest<MeResponse>('/api/auth/sign-in', { method: 'POST', body: input, sessionRequired: false }),
    onSuccess: ({ user }) => {
      queryClient.clear();
      queryClient.setQueryData(authKeys.me(), user);
    },
  });
}

export function useBadgeSignIn() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (input: BadgeSignIn) =>
      apiRequest<MeResponse>('/api/auth/badge-sign-in', {
        method: 'POST',
        body: input,
        sessionRequired: false,
      }),
    onSuccess: ({ user }) => {
      queryClient.clear();
      queryClient.setQueryData(authKeys.me(), user);
    },
  });
}

export function useSignOut() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: () => apiRequest<void>('/api/auth/sign-out', { method: 'POST', sessionRequired: false }),
    onSettled: () => {
      queryClient.clear();
      queryClient.setQueryData(authKeys.me(), null);
    },
  });
}
