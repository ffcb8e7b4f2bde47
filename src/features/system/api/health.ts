import { queryOptions, useQuery } from '@tanstack/react-query';
import { healthSchema, type Health } from '#shared/schemas/health';
import { apiRequest, isApiError } from '#src/lib/api-client';

export const systemKeys = {
  all: ['system'] as const,
  details: () => [...systemKeys.all, 'detail'] as const,
  detail: (id: 'health') => [...systemKeys.details(), id] as const,
};

/**
 * A health report may come with 200 or with 503 (something is down); both carry the same body. Anything
 * else is an error like any other call.
 */
async function fetchHealth(): Promise<Health> {
  try {
    return healthSchema.parse(await apiRequest<unknown>('/api/health', { sessionRequired: false }));
  } catch (error) {
    if (isApiError(error) && error.status === 503 && error.body !== undefined) {
      const parsed = healthSchema.safeParse(error.body);
      if (parsed.success) return parsed.data;
    }
    throw error;
  }
}

export const healthQueryOptions = () =>
  queryOptions({
    queryKey: systemKeys.detail('health'),
    queryFn: fetchHealth,
    refetchInterval: 15_000,
    staleTime: 5_000,
  });

export function useHealth() {
  return useQuery(healthQueryOptions());
}
