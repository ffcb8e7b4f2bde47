import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { MeResponse, SetPassword } from '#shared/schemas/auth';
import { apiRequest } from '#src/lib/api-client';
import { authKeys } from './auth-keys';

/** Always answered 202, known address or not, so nobody can probe for accounts. */
export function useRequestPasswordReset() {
  return useMutation({
    mutationFn: (input: { email: string }) =>
      apiRequest<void>('/api/auth/password-reset', { method: 'POST', body: input, sessionRequired: false }),
  });
}

/**
 * Completes an invitation or a reset. Whether the server also opens a session is its choice, so the
 * cached identity is dropped and asked for again rather than assumed.
 */
export function useSetPassword() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (input: SetPassword) =>
      apiRequest<MeResponse>('/api/auth/set-password', {
        method: 'POST',
        body: input,
        sessionRequired: false,
      }),
    onSuccess: async () => {
      queryClient.clear();
      await queryClient.invalidateQueries({ queryKey: authKeys.all });
    },
  });
}
