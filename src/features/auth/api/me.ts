import { queryOptions, useQuery } from '@tanstack/react-query';
import type { Me, MeResponse } from '#shared/schemas/auth';
import { apiRequest, isApiError } from '#src/lib/api-client';
import { authKeys } from './auth-keys';

/** Who is signed in, or null when nobody is (401 `auth.required` is an answer here, not an error). */
export async function fetchMe(): Promise<Me | null> {
  try {
    const body = await apiRequest<MeResponse>('/api/me', { sessionRequired: false });
    return body.user;
  } catch (error) {
    if (isApiError(error) && error.status === 401) return null;
    throw error;
  }
}

export const meQueryOptions = () =>
  queryOptions({
    queryKey: authKeys.me(),
    queryFn: fetchMe,
    staleTime: 60_000,
  });

export function useMe() {
  return useQuery(meQueryOptions());
}
