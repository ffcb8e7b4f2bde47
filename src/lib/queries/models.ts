import { queryOptions, useQuery } from '@tanstack/react-query';
import type { ModelView } from '#shared/schemas/models';
import { apiRequest } from '../api-client';

/** Models as the line reads them (code, pole pairs, recipe in force), read by several features. */
export const modelKeys = {
  all: ['models'] as const,
  list: () => [...modelKeys.all, 'list'] as const,
};

export const modelsQueryOptions = () =>
  queryOptions({
    queryKey: modelKeys.list(),
    queryFn: () => apiRequest<{ models: ModelView[] }>('/api/models').then((b) => b.models),
    staleTime: 5 * 60_000,
  });

export function useModels() {
  return useQuery(modelsQueryOptions());
}
