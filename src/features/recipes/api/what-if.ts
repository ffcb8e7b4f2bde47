import { useEffect } from 'react';
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { whatIfProgressSchema, type WhatIfFilters, type WhatIfRunView } from '#shared/schemas/recipes';
import { apiRequest } from '#src/lib/api-client';
import { recipesKeys } from './recipes';

export const whatIfKeys = {
  all: [...recipesKeys.all, 'what-if'] as const,
  lists: () => [...whatIfKeys.all, 'list'] as const,
  list: (recipeId: string) => [...whatIfKeys.lists(), recipeId] as const,
  details: () => [...whatIfKeys.all, 'detail'] as const,
  detail: (runId: string) => [...whatIfKeys.details(), runId] as const,
};

export function useWhatIfRuns(recipeId: string) {
  return useQuery({
    queryKey: whatIfKeys.list(recipeId),
    queryFn: () =>
      apiRequest<{ runs: WhatIfRunView[] }>(`/api/recipes/${encodeURIComponent(recipeId)}/what-if`).then(
        (b) => b.runs,
      ),
  });
}

export function useStartWhatIf(recipeId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (filters: WhatIfFilters) =>
      apiRequest<WhatIfRunView>(`/api/recipes/${encodeURIComponent(recipeId)}/what-if`, {
        method: 'POST',
        body: { filters },
      }),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: whatIfKeys.list(recipeId) }),
  });
}

export function useCancelWhatIf(recipeId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (runId: string) =>
      apiRequest<WhatIfRunView>(`/api/what-if/${encodeURIComponent(runId)}/cancel`, { method: 'POST' }),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: whatIfKeys.list(recipeId) }),
  });
}

/**
 * Follows a running what-if over Server-Sent Events: progress goes into the cached run at once, and
 * when the run ends the list is read again for its results.
 */
export function useWhatIfProgress(recipeId: string, run: WhatIfRunView | undefined) {
  const queryClient = useQueryClient();
  const active = run && (run.status === 'queued' || run.status === 'running') ? run.id : null;
  useEffect(() => {
    if (!active) return;
    const source = new EventSource(`/api/what-if/${encodeURIComponent(active)}/events`);
    source.addEventListener('progress', (e) => {
      const parsed = whatIfProgressSchema.safeParse(JSON.parse((e as MessageEvent<string>).data));
      if (!parsed.success) return;
      const p = parsed.data;
      queryClient.setQueryData<WhatIfRunView[]>(whatIfKeys.list(recipeId), (runs) =>
        runs?.map((r) =>
          r.id === p.runId ? { ...r, status: p.status, processed: p.processed, total: p.total } : r,
        ),
      );
      if (p.status !== 'queued' && p.status !== 'running') {
        source.close();
        void queryClient.invalidateQueries({ queryKey: whatIfKeys.list(recipeId) });
      }
    });
    return () => source.close();
  }, [active, recipeId, queryClient]);
}
